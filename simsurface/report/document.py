"""A tiny report document: headings, paragraphs, tables, lists and figures, rendered as Markdown or HTML.

Reports are built once as a list of blocks and rendered twice, so the Markdown and HTML versions say the
same thing. HTML embeds figures as base64 data, so the page is a single self-contained file.
"""

from __future__ import annotations

import base64
import html
from dataclasses import dataclass, field
from pathlib import Path


@dataclass
class Document:
    """Blocks in order: ("h", level, text), ("p", text), ("table", header, rows), ("ul", items), ("img", file, caption)."""

    title: str
    blocks: list[tuple] = field(default_factory=list)

    def heading(self, text: str, level: int = 2) -> None:
        self.blocks.append(("h", level, text))

    def paragraph(self, text: str) -> None:
        self.blocks.append(("p", text))

    def table(self, header: list[str], rows: list[list[str]]) -> None:
        self.blocks.append(("table", header, rows))

    def bullets(self, items: list[str]) -> None:
        self.blocks.append(("ul", list(items)))

    def figure(self, file_name: str, caption: str) -> None:
        self.blocks.append(("img", file_name, caption))

    # --- rendering ------------------------------------------------------------------------------------
    def markdown(self) -> str:
        out = [f"# {self.title}", ""]
        for block in self.blocks:
            kind = block[0]
            if kind == "h":
                out += ["#" * block[1] + " " + block[2], ""]
            elif kind == "p":
                out += [block[1], ""]
            elif kind == "table":
                header, rows = block[1], block[2]
                out.append("| " + " | ".join(header) + " |")
                out.append("|" + "|".join("---" for _ in header) + "|")
                out += ["| " + " | ".join(str(c).replace("|", "\\|") for c in row) + " |" for row in rows]
                out.append("")
            elif kind == "ul":
                out += [f"- {item}" for item in block[1]] + [""]
            elif kind == "img":
                out += [f"![{block[2]}]({block[1]})", "", f"*{block[2]}*", ""]
        return "\n".join(out)

    def html(self, folder: Path) -> str:
        esc = html.escape
        parts = ["<!DOCTYPE html>", "<html lang=\"en\"><head><meta charset=\"utf-8\">",
                 f"<title>{esc(self.title)}</title>", "<style>",
                 "body{font-family:sans-serif;max-width:60em;margin:2em auto;line-height:1.4;padding:0 1em}",
                 "table{border-collapse:collapse;margin:1em 0}td,th{border:1px solid #bbb;padding:.25em .6em;"
                 "text-align:left;vertical-align:top}th{background:#eee}img{max-width:100%}"
                 "figcaption{font-style:italic;color:#444}", "</style></head><body>",
                 f"<h1>{esc(self.title)}</h1>"]
        for block in self.blocks:
            kind = block[0]
            if kind == "h":
                parts.append(f"<h{block[1]}>{esc(block[2])}</h{block[1]}>")
            elif kind == "p":
                parts.append(f"<p>{_inline(block[1])}</p>")
            elif kind == "table":
                parts.append("<table><tr>" + "".join(f"<th>{esc(h)}</th>" for h in block[1]) + "</tr>")
                for row in block[2]:
                    parts.append("<tr>" + "".join(f"<td>{_inline(str(c))}</td>" for c in row) + "</tr>")
                parts.append("</table>")
            elif kind == "ul":
                parts.append("<ul>" + "".join(f"<li>{_inline(i)}</li>" for i in block[1]) + "</ul>")
            elif kind == "img":
                data = base64.b64encode((folder / block[1]).read_bytes()).decode("ascii")
                parts.append(f"<figure><img src=\"data:image/png;base64,{data}\" alt=\"{esc(block[2])}\">"
                             f"<figcaption>{esc(block[2])}</figcaption></figure>")
        parts.append("</body></html>")
        return "\n".join(parts) + "\n"


def _inline(text: str) -> str:
    """Escape, then turn **bold** and `code` marks into HTML."""
    out = html.escape(text)
    while out.count("**") >= 2:
        out = out.replace("**", "<strong>", 1).replace("**", "</strong>", 1)
    while out.count("`") >= 2:
        out = out.replace("`", "<code>", 1).replace("`", "</code>", 1)
    return out
