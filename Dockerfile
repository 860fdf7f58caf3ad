# Friedmann Desk for a research group (README.md, "Hosting it for a group").
#   docker build -t friedmann-desk .
#   docker run --network host -e PORT=8050 -e WORKERS=2 friedmann-desk
# It listens on 127.0.0.1 only: run it with host networking next to the department's reverse
# proxy. Scale out with FDESK_CACHE_TYPE=RedisCache and FDESK_CACHE_REDIS_URL.
FROM python:3.11-slim-bookworm

ENV PYTHONDONTWRITEBYTECODE=1 \
    PYTHONUNBUFFERED=1 \
    PIP_NO_CACHE_DIR=1 \
    PIP_DISABLE_PIP_VERSION_CHECK=1 \
    HOST=127.0.0.1 \
    PORT=8050 \
    WORKERS=2 \
    FDESK_CACHE_DIR=/var/cache/friedmann-desk

RUN useradd --system --uid 10001 --create-home fdesk \
    && mkdir -p /var/cache/friedmann-desk \
    && chown fdesk /var/cache/friedmann-desk

WORKDIR /app
COPY constraints.txt pyproject.toml README.md gunicorn.conf.py ./
COPY docs/measurements-format.md ./docs/
COPY model ./model
COPY server ./server
COPY layouts ./layouts
RUN pip install -c constraints.txt ".[web]"

USER fdesk
EXPOSE 8050
HEALTHCHECK --interval=30s --timeout=10s --start-period=30s --retries=3 CMD python server/healthcheck.py
CMD exec gunicorn --no-control-socket -w "$WORKERS" -b "$HOST:$PORT" server.wsgi:application
