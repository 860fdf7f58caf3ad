"""gunicorn settings for Friedmann Desk, read by gunicorn itself from the working directory
(README.md, "Hosting it for a group"), so the documented command stays one line:

    gunicorn --no-control-socket -w 2 -b 127.0.0.1:8050 server.wsgi:application

Threaded workers (`gthread`): a client that sends its request slowly holds one thread, not a
whole worker, and the worker keeps answering its heartbeat while a long download streams.
Command-line options (and GUNICORN_CMD_ARGS) override what is set here.
"""

import os

worker_class = "gthread"
# Threads per worker: enough that a handful of slow or stalled clients leave the rest served;
# the numerical work holds the GIL, so more threads do not compute faster (judgement, no source).
threads = int(os.environ.get("FDESK_THREADS", "8"))
# A worker that stops answering its heartbeat for this long is replaced.
timeout = 30
# Seconds a keep-alive connection may idle between requests before the worker drops it. A
# client that stalls mid-request is handed back to the worker's poller after a few seconds
# without data (gunicorn's gthread worker), so it holds no thread while it waits.
keepalive = 5
