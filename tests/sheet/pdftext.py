"""A small reader of the PDFs headless Chromium prints: pages, their size and their text.

No PDF library is installed here, and the test only needs what a person checks on a
printed page: how many pages, which paper, and which words sit on which page. Chromium
(Skia) writes plain objects (no object streams), Flate-compressed page contents, and
text as glyph codes of Type0 fonts, each with a ToUnicode map (PDF 1.7, ISO 32000-1,
section 9.10.3); that is all this reads. It is a test helper, not a general parser.
"""

from __future__ import annotations

import re
import zlib

_OBJECT = re.compile(rb"(\d+) 0 obj(.*?)endobj", re.S)
_REF = rb"(\d+) 0 R"


def _objects(data: bytes) -> dict[int, bytes]:
    return {int(n): body for n, body in _OBJECT.findall(data)}


def _stream(body: bytes) -> bytes:
    start = body.index(b"stream") + len(b"stream")
    if body[start:start + 2] == b"\r\n":
        start += 2
    elif body[start:start + 1] in (b"\n", b"\r"):
        start += 1
    raw = body[start:body.rindex(b"endstream")]
    return zlib.decompress(raw) if b"/FlateDecode" in body[:start] else raw


def _utf16(hex_text: bytes) -> str:
    return bytes.fromhex(hex_text.decode()).decode("utf-16-be", errors="replace")


def _to_unicode(cmap: bytes) -> dict[int, str]:
    """Glyph code → text from a ToUnicode CMap (bfchar and bfrange entries)."""
    table: dict[int, str] = {}
    for block in re.findall(rb"beginbfchar(.*?)endbfchar", cmap, re.S):
        for src, dst in re.findall(rb"<([0-9A-Fa-f]+)>\s*<([0-9A-Fa-f]+)>", block):
            table[int(src, 16)] = _utf16(dst)
    for block in re.findall(rb"beginbfrange(.*?)endbfrange", cmap, re.S):
        for lo, hi, dst in re.findall(
                rb"<([0-9A-Fa-f]+)>\s*<([0-9A-Fa-f]+)>\s*(<[0-9A-Fa-f]+>|\[[^\]]*\])", block):
            lo, hi = int(lo, 16), int(hi, 16)
            if dst.startswith(b"["):
                for k, item in enumerate(re.findall(rb"<([0-9A-Fa-f]+)>", dst)):
                    table[lo + k] = _utf16(item)
            else:
                first = _utf16(dst[1:-1])
                for k in range(hi - lo + 1):
                    table[lo + k] = first[:-1] + chr(ord(first[-1]) + k)
    return table


def _fonts(page: bytes, objects: dict[int, bytes]) -> dict[str, dict[int, str]]:
    found = {}
    block = re.search(rb"/Font\s*<<(.*?)>>", page, re.S)
    if not block:
        return found
    for name, ref in re.findall(rb"/(\w+)\s+" + _REF, block.group(1)):
        font = objects.get(int(ref), b"")
        to_unicode = re.search(rb"/ToUnicode\s+" + _REF, font)
        found[name.decode()] = (_to_unicode(_stream(objects[int(to_unicode.group(1))]))
                                if to_unicode else {})
    return found


_TEXT_OP = re.compile(rb"/(\w+)\s+[-\d.]+\s+Tf|([-\d.]+)\s+([-\d.]+)\s+Tm|<([0-9A-Fa-f]*)>\s*Tj"
                      rb"|\[(.*?)\]\s*TJ")


def _page_text(content: bytes, fonts: dict[str, dict[int, str]]) -> str:
    """The page's text runs in painting order; a run at a new height starts a new line."""
    lines: list[str] = []
    last_y = None
    for block in re.findall(rb"BT(.*?)ET", content, re.S):
        table: dict[int, str] = {}
        y = None
        run = []
        for font, _x, ty, hex_text, array in _TEXT_OP.findall(block):
            if font:
                table = fonts.get(font.decode(), {})
            elif ty:
                y = float(ty)
            else:
                for h in ([hex_text] if hex_text else re.findall(rb"<([0-9A-Fa-f]*)>", array)):
                    codes = bytes.fromhex(h.decode())
                    run.extend(table.get(int.from_bytes(codes[k:k + 2], "big"), "\ufffd")
                               for k in range(0, len(codes), 2))
        text = "".join(run)
        if lines and y is not None and last_y == y:
            lines[-1] += " " + text
        else:
            lines.append(text)
        last_y = y
    return "\n".join(lines)


def _page_numbers(objects: dict[int, bytes], node: int) -> list[int]:
    """Leaves of the page tree under ``node`` in order (ISO 32000-1, 7.7.3: Pages/Kids)."""
    body = objects[node]
    if not re.search(rb"/Type\s*/Pages\b", body):
        return [node]
    kids = re.search(rb"/Kids\s*\[(.*?)\]", body, re.S)
    return [leaf for kid in re.findall(_REF, kids.group(1))
            for leaf in _page_numbers(objects, int(kid))]


def pdf_pages(data: bytes) -> list[dict]:
    """``[{"width", "height", "text"}]`` for each page (points; text as described above)."""
    objects = _objects(data)
    catalog = next(body for body in objects.values() if re.search(rb"/Type\s*/Catalog\b", body))
    root = int(re.search(rb"/Pages\s+" + _REF, catalog).group(1))
    pages = []
    for number in _page_numbers(objects, root):
        page = objects[number]
        box = [float(v) for v in re.search(rb"/MediaBox\s*\[([^\]]*)\]", page).group(1).split()]
        refs = re.search(rb"/Contents\s+(?:\[(.*?)\]|" + _REF + rb")", page, re.S)
        ids = ([int(n) for n in re.findall(_REF, refs.group(1))] if refs.group(1)
               else [int(refs.group(2))])
        content = b"\n".join(_stream(objects[i]) for i in ids)
        pages.append({"width": box[2] - box[0], "height": box[3] - box[1],
                      "text": _page_text(content, _fonts(page, objects))})
    return pages
