"""Characters that are not text never leave a reader: lone surrogates, control and private-use characters.

PDF text layers carry UTF-16 halves without their partner, glyph codes in the private-use planes and stray
control codes; Word and HTML files carry vertical tabs and form feeds. None of them is a word a reader sees,
and a lone surrogate cannot even be encoded (spaCy's tokenizer stops on it). ``clean_block`` removes them from
a block and keeps its marks on the same characters; a control character between two words becomes a space so
that the words stay apart. A proper surrogate pair is joined into its one character (NFKC-normalised,
as PDF text is).
"""

from __future__ import annotations

import dataclasses
import re
import unicodedata

from .document import Block, Mark

#: controls (tab, line feed and carriage return are whitespace and stay), DEL and the C1 controls
_CONTROL = "\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f"
#: surrogates, private use (BMP and planes 15-16), noncharacters, soft hyphen, zero-width space, byte-order mark
_DROP = "\ud800-\udfff\ue000-\uf8ff\U000f0000-\U0010ffff\ufdd0-\ufdef\ufffe\uffff\u00ad\u200b\ufeff"
_BAD = re.compile(f"[{_CONTROL}{_DROP}]+")
_CONTROL_ONLY = re.compile(f"[{_CONTROL}]")
_HIGH = re.compile("[\ud800-\udbff][\udc00-\udfff]")
#: what is worth a warning: invisible format characters and line-break controls are removed silently
_UNEXPECTED = re.compile("[\x00-\x08\x0e-\x1f\x7f-\x9f\ud800-\udfff\ue000-\uf8ff\U000f0000-\U0010ffff"
                         "\ufdd0-\ufdef\ufffe\uffff]")


def _fix_run(run: str) -> tuple[str, int]:
    """What a run of bad characters becomes (joined surrogate pairs, one space for controls, else nothing),
    and how many unexpected characters it dropped."""
    out: list[str] = []
    dropped = 0
    i = 0
    while i < len(run):
        ch = run[i]
        if _HIGH.match(run, i):
            # PDF text layers give mathematical letters (U+1D400...) as two halves; NFKC makes them letters
            out.append(unicodedata.normalize("NFKC", run[i:i + 2].encode("utf-16-le", "surrogatepass")
                                             .decode("utf-16-le")))
            i += 2
            continue
        if _CONTROL_ONLY.match(ch):
            if not out or out[-1] != " ":
                out.append(" ")
        if _UNEXPECTED.match(ch):
            dropped += 1
        i += 1
    return "".join(out), dropped


def clean_text(text: str) -> tuple[str, list[tuple[int, int, int, int]], int]:
    """The text without characters that are not text; each replaced run as (old start, old end, new start,
    new end), in order; and how many unexpected characters (not invisible format characters) were dropped."""
    if not _BAD.search(text):
        return text, [], 0
    pieces: list[str] = []
    runs: list[tuple[int, int, int, int]] = []
    removed = 0
    pos = new = 0
    for m in _BAD.finditer(text):
        pieces.append(text[pos:m.start()])
        new += m.start() - pos
        fixed, dropped = _fix_run(m.group())
        removed += dropped
        end = m.end()
        space_before = m.start() == 0 or text[m.start() - 1].isspace()
        space_after = end == len(text) or text[end].isspace()
        # a control between a space and a word, or at an edge, adds no second space
        if fixed == " " and (space_before or space_after):
            fixed = ""
        # a symbol standing alone between two spaces leaves one space, not two
        if not fixed and m.start() > 0 and space_before and end < len(text) and text[end] == " ":
            end += 1
        runs.append((m.start(), end, new, new + len(fixed)))
        pieces.append(fixed)
        new += len(fixed)
        pos = end
    pieces.append(text[pos:])
    return "".join(pieces), runs, removed


def _moved(offset: int, runs: list[tuple[int, int, int, int]]) -> int:
    """The new offset of old ``offset``; an offset inside a replaced run moves to where the run was."""
    new = offset
    for old_start, old_end, new_start, new_end in runs:
        if offset < old_start:
            break
        if offset < old_end:
            return new_start
        new = new_end + (offset - old_end)
    return new


def clean_block(block: Block) -> tuple[Block, int]:
    """The block with its text cleaned and its marks moved with the text; and the number of characters removed."""
    text, runs, removed = clean_text(block.text)
    if not runs:
        return block, 0
    marks = block.marks
    if marks:
        marks = tuple(dataclasses.replace(m, offset=_moved(m.offset, runs) if m.offset else 0) for m in marks)
    cells = tuple(c for c in (clean_text(c)[0] for c in block.cells) if c)
    return dataclasses.replace(block, text=text, marks=marks, cells=cells), removed


def clean_blocks(blocks: list[Block]) -> tuple[list[Block], list[str]]:
    """All blocks cleaned; blocks left with no text dropped; a warning when characters were removed."""
    out: list[Block] = []
    removed = 0
    for block in blocks:
        cleaned, n = clean_block(block)
        removed += n
        if cleaned.text.strip() or not block.text.strip():
            out.append(cleaned)
    warnings: list[str] = []
    if removed:
        what = "1 character that is not text was" if removed == 1 else f"{removed} characters that are not text were"
        warnings.append(f"{what} left out (control codes, private-use symbols or broken UTF-16 halves)")
    return out, warnings
