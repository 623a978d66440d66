"""Render a report document (a list of blocks of *plain text*) as Markdown or as one
standalone HTML page. Every string is escaped here, so the content builder never writes
markup and a user string can never become live HTML.

Blocks are tuples:

- ``("h1" | "h2" | "h3", text)``
- ``("p", text)``, ``("answer", text)`` (highlighted), ``("note", text)`` (small print)
- ``("ul", [text, ...])``
- ``("table", header, rows)`` with every cell a string
- ``("img", key, caption)``: an image named ``key`` (``pareto``, ``response`` ...)
"""

from __future__ import annotations

import base64
import html
import re

__all__ = ["render_markdown", "render_html", "md_escape"]

_MD_SPECIAL = re.compile(r"([\\`*_\[\]|~])")
_MD_LEAD = re.compile(r"^([#>+=-])|^(\d+)([.)])")


def md_escape(text: str, line_start: bool = True) -> str:
    """Plain text for Markdown: HTML-escaped (``<script>`` stays text) and Markdown
    punctuation backslash-escaped (also a list or heading marker where the text starts a
    line); newlines become spaces."""
    t = " ".join(str(text).split())
    t = _MD_SPECIAL.sub(r"\\\1", html.escape(t, quote=False))
    if not line_start:
        return t
    return _MD_LEAD.sub(lambda m: "\\" + m[1] if m[1] else m[2] + "\\" + m[3], t)


def _md_cell(text: str) -> str:
    return md_escape(text, line_start=False) or " "


def render_markdown(blocks: list[tuple], images: dict[str, str] | None = None) -> str:
    """Markdown; ``images`` maps an image key to a relative file name (missing: skipped)."""
    images = images or {}
    out: list[str] = []
    for b in blocks:
        kind = b[0]
        if kind in ("h1", "h2", "h3"):
            out.append("#" * int(kind[1]) + " " + md_escape(b[1]))
        elif kind == "p":
            out.append(md_escape(b[1]))
        elif kind == "answer":
            out.append("> **" + md_escape(b[1]) + "**")
        elif kind == "note":
            out.append("_" + md_escape(b[1]) + "_")
        elif kind == "ul":
            out.append("\n".join("- " + md_escape(t) for t in b[1]))
        elif kind == "table":
            head, rows = b[1], b[2]
            lines = ["| " + " | ".join(_md_cell(h) for h in head) + " |",
                     "|" + "|".join("---" for _ in head) + "|"]
            lines += ["| " + " | ".join(_md_cell(c) for c in r) + " |" for r in rows]
            out.append("\n".join(lines))
        elif kind == "img":
            name = images.get(b[1])
            if name:
                out.append(f"![{md_escape(b[2])}]({name})")
        else:  # a programming error in the builder, not user input
            raise ValueError(f"unknown report block {kind!r}")
    return "\n\n".join(out) + "\n"


_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Helvetica,Arial,sans-serif;
 max-width:62rem;margin:1.5rem auto;padding:0 1rem;color:#1b1b1b;line-height:1.45}
h1{font-size:1.6rem;margin-bottom:.2rem}h2{font-size:1.25rem;margin-top:2rem;
 border-bottom:1px solid #ddd;padding-bottom:.2rem}h3{font-size:1.05rem}
.answer{background:#eef5ff;border-left:5px solid #1f77b4;padding:.7rem 1rem;
 font-size:1.08rem;font-weight:600}
.note{color:#555;font-size:.88rem}
table{border-collapse:collapse;margin:.6rem 0;font-size:.92rem}
th,td{border:1px solid #ccc;padding:.25rem .55rem;text-align:left;vertical-align:top}
th{background:#f3f3f3}tr:nth-child(even) td{background:#fafafa}
figure{margin:1rem 0}figure img{max-width:100%;height:auto;border:1px solid #eee}
figcaption{color:#555;font-size:.88rem}
@media print{body{max-width:none}h2{page-break-after:avoid}figure{page-break-inside:avoid}}
"""


def _esc(text: str) -> str:
    return html.escape(str(text), quote=True)


def render_html(blocks: list[tuple], images: dict[str, bytes] | None = None,
                title: str = "stackopt report") -> str:
    """One standalone HTML page: inline CSS, PNG images inlined as ``data:`` URIs, and a
    content security policy that forbids scripts and any network access."""
    images = images or {}
    body: list[str] = []
    for b in blocks:
        kind = b[0]
        if kind in ("h1", "h2", "h3"):
            body.append(f"<{kind}>{_esc(b[1])}</{kind}>")
        elif kind == "p":
            body.append(f"<p>{_esc(b[1])}</p>")
        elif kind == "answer":
            body.append(f'<p class="answer">{_esc(b[1])}</p>')
        elif kind == "note":
            body.append(f'<p class="note">{_esc(b[1])}</p>')
        elif kind == "ul":
            body.append("<ul>" + "".join(f"<li>{_esc(t)}</li>" for t in b[1]) + "</ul>")
        elif kind == "table":
            head = "".join(f"<th>{_esc(h)}</th>" for h in b[1])
            rows = "".join("<tr>" + "".join(f"<td>{_esc(c)}</td>" for c in r) + "</tr>"
                           for r in b[2])
            body.append(f"<table><thead><tr>{head}</tr></thead><tbody>{rows}</tbody></table>")
        elif kind == "img":
            data = images.get(b[1])
            if data:
                uri = "data:image/png;base64," + base64.b64encode(data).decode("ascii")
                body.append(f'<figure><img src="{uri}" alt="{_esc(b[2])}">'
                            f"<figcaption>{_esc(b[2])}</figcaption></figure>")
        else:
            raise ValueError(f"unknown report block {kind!r}")
    csp = ("default-src 'none'; img-src data:; style-src 'unsafe-inline'; "
           "base-uri 'none'; form-action 'none'")
    return ("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
            f'<meta http-equiv="Content-Security-Policy" content="{csp}">\n'
            '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
            f"<title>{_esc(title)}</title>\n<style>{_CSS}</style>\n</head>\n<body>\n"
            + "\n".join(body) + "\n</body>\n</html>\n")
