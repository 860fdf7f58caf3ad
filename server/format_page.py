"""The measurement format's description as a page of its own (``<prefix>format``).

The text is ``docs/measurements-format.md``, shipped inside the package as
``server/docs/measurements-format.md`` (a link to it, so an installed copy has it too) and read
with `importlib.resources`. `markdown_to_html` is a small converter for the parts of Markdown
that file uses: ATX headings, paragraphs, ``-`` and ``1.`` lists, fenced code blocks, pipe
tables, and inline ``code``, ``**bold**``, ``*emphasis*`` and ``[text](target)`` links. Every
piece of text is escaped; nothing else of Markdown is interpreted.
"""

from __future__ import annotations

import html
import re
from importlib import resources

from flask import Response

__all__ = ["markdown_to_html", "format_page", "FORMAT_FILE", "register"]

FORMAT_FILE = "measurements-format.md"
_HEADING = re.compile(r"^(#{1,6})\s+(.*?)\s*#*\s*$")
_BULLET = re.compile(r"^\s*[-*]\s+(.*)$")
_NUMBERED = re.compile(r"^\s*\d+[.)]\s+(.*)$")
_TABLE_RULE = re.compile(r"^\s*\|?\s*:?-{3,}:?\s*(\|\s*:?-{3,}:?\s*)*\|?\s*$")
_INLINE = re.compile(r"`([^`]+)`|\*\*(.+?)\*\*|\*(?!\s)(.+?)\*|\[([^\]]+)\]\(([^)\s]+)\)")


def _inline(text: str) -> str:
    out, at = [], 0
    for m in _INLINE.finditer(text):
        out.append(html.escape(text[at:m.start()]))
        code, bold, emphasis, label, target = m.groups()
        if code is not None:
            out.append(f"<code>{html.escape(code)}</code>")
        elif bold is not None:
            out.append(f"<strong>{_inline(bold)}</strong>")
        elif emphasis is not None:
            out.append(f"<em>{_inline(emphasis)}</em>")
        else:
            safe = target if re.match(r"^(https?:|#|[\w./-]+$)", target) else "#"
            out.append(f'<a href="{html.escape(safe)}">{_inline(label)}</a>')
        at = m.end()
    out.append(html.escape(text[at:]))
    return "".join(out)


def _cells(line: str) -> list[str]:
    line = line.strip()
    line = line[1:] if line.startswith("|") else line
    line = line[:-1] if line.endswith("|") else line
    # a pipe inside `code` belongs to the cell
    cells, current, in_code = [], "", False
    for ch in line:
        if ch == "`":
            in_code = not in_code
        if ch == "|" and not in_code:
            cells.append(current.strip())
            current = ""
        else:
            current += ch
    return cells + [current.strip()]


def _table(lines: list[str]) -> str:
    head = "".join(f"<th>{_inline(c)}</th>" for c in _cells(lines[0]))
    body = "".join("<tr>" + "".join(f"<td>{_inline(c)}</td>" for c in _cells(row)) + "</tr>" for row in lines[2:])
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def markdown_to_html(text: str) -> str:
    """The HTML body of Markdown `text` (the subset in the module docstring), every text escaped.

    >>> markdown_to_html("# Title\\n\\nSome `z` <b>.\\n\\n- one\\n- two")
    '<h1>Title</h1>\\n<p>Some <code>z</code> &lt;b&gt;.</p>\\n<ul><li>one</li><li>two</li></ul>'
    """
    lines = text.replace("\r\n", "\n").split("\n")
    out: list[str] = []
    i = 0
    while i < len(lines):
        line = lines[i]
        if not line.strip():
            i += 1
            continue
        if line.lstrip().startswith("```"):
            j = i + 1
            while j < len(lines) and not lines[j].lstrip().startswith("```"):
                j += 1
            out.append("<pre><code>" + html.escape("\n".join(lines[i + 1:j])) + "</code></pre>")
            i = j + 1
            continue
        heading = _HEADING.match(line)
        if heading:
            level = len(heading.group(1))
            out.append(f"<h{level}>{_inline(heading.group(2))}</h{level}>")
            i += 1
            continue
        if "|" in line and i + 1 < len(lines) and _TABLE_RULE.match(lines[i + 1]):
            j = i + 2
            while j < len(lines) and "|" in lines[j] and lines[j].strip():
                j += 1
            out.append(_table(lines[i:j]))
            i = j
            continue
        for pattern, tag in ((_BULLET, "ul"), (_NUMBERED, "ol")):
            if pattern.match(line):
                items: list[str] = []
                while i < len(lines) and lines[i].strip() and not _HEADING.match(lines[i]):
                    item = pattern.match(lines[i])
                    if item:
                        items.append(item.group(1))
                    elif items and lines[i].startswith((" ", "\t")):
                        items[-1] += " " + lines[i].strip()  # a continuation line of the item
                    else:
                        break
                    i += 1
                out.append(f"<{tag}>" + "".join(f"<li>{_inline(t)}</li>" for t in items) + f"</{tag}>")
                break
        else:
            j = i
            while (j < len(lines) and lines[j].strip() and not _HEADING.match(lines[j])
                   and not lines[j].lstrip().startswith("```") and not _BULLET.match(lines[j])
                   and not _NUMBERED.match(lines[j])
                   and not ("|" in lines[j] and j + 1 < len(lines) and _TABLE_RULE.match(lines[j + 1]))):
                j += 1
            out.append("<p>" + _inline(" ".join(s.strip() for s in lines[i:j])) + "</p>")
            i = j
    return "\n".join(out)


_STYLE = ("body{font-family:system-ui,-apple-system,'Segoe UI',sans-serif;max-width:52rem;margin:2rem auto;"
          "padding:0 1rem;line-height:1.5;color:#1b1b1b}pre{background:#f4f4f4;padding:.6rem;overflow-x:auto}"
          "code{font-family:ui-monospace,monospace;font-size:.92em}table{border-collapse:collapse;margin:1rem 0}"
          "th,td{border:1px solid #ccc;padding:.25rem .5rem;text-align:left;vertical-align:top}")


def format_page(page_url: str) -> str:
    """The whole HTML page: the format's description, with a link back to the desk at `page_url`."""
    text = resources.files("server").joinpath("docs", FORMAT_FILE).read_text(encoding="utf-8")
    title = next((m.group(2) for m in map(_HEADING.match, text.split("\n")) if m), "Measurement tables")
    return (f'<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8"><title>{html.escape(title)} · '
            f"Friedmann Desk</title><style>{_STYLE}</style></head><body>"
            f'<p><a href="{html.escape(page_url)}">← back to Friedmann Desk</a></p>\n'
            f"{markdown_to_html(text)}\n</body></html>\n")


def register(flask_app, prefix: str, page_url: str) -> None:
    """Serve the page at ``<prefix>format`` (the prefix as normalised by `server.config`)."""

    def measurement_format():
        return Response(format_page(page_url), mimetype="text/html")

    flask_app.add_url_rule(prefix + "format", "measurement_format", measurement_format, methods=["GET"])
