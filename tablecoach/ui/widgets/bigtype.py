"""Large type for the aim reading, readable from the rail: digits three lines tall."""

from __future__ import annotations

from rich.text import Text

_BOX = {
    "0": ("┏━┓", "┃ ┃", "┗━┛"),
    "1": (" ┓ ", " ┃ ", " ┻ "),
    "2": ("╺━┓", "┏━┛", "┗━╸"),
    "3": ("╺━┓", " ━┫", "╺━┛"),
    "4": ("╻ ╻", "┗━┫", "  ╹"),
    "5": ("┏━╸", "┗━┓", "╺━┛"),
    "6": ("┏━╸", "┣━┓", "┗━┛"),
    "7": ("╺━┓", "  ┃", "  ╹"),
    "8": ("┏━┓", "┣━┫", "┗━┛"),
    "9": ("┏━┓", "┗━┫", "╺━┛"),
    ".": ("  ", "  ", "▪ "),
    "-": ("   ", "╺━╸", "   "),
    " ": ("  ", "  ", "  "),
}
"""Box-drawing digits, three cells wide (the point two)."""

_ASCII = {
    "0": (" _ ", "| |", "|_|"),
    "1": ("   ", "  |", "  |"),
    "2": (" _ ", " _|", "|_ "),
    "3": (" _ ", " _|", " _|"),
    "4": ("   ", "|_|", "  |"),
    "5": (" _ ", "|_ ", " _|"),
    "6": (" _ ", "|_ ", "|_|"),
    "7": (" _ ", "  |", "  |"),
    "8": (" _ ", "|_|", "|_|"),
    "9": (" _ ", "|_|", " _|"),
    ".": ("  ", "  ", ". "),
    "-": ("   ", " _ ", "   "),
    " ": ("  ", "  ", "  "),
}
"""Seven-segment digits in plain ASCII."""


def big(text: str, ascii_only: bool = False, style: str = "bold") -> Text:
    """``text`` (digits, '.', '-', ' ') as three lines of large type; other characters are
    left out."""
    font = _ASCII if ascii_only else _BOX
    rows = ["", "", ""]
    for ch in text:
        glyph = font.get(ch)
        if glyph is None:
            continue
        for i in range(3):
            rows[i] += glyph[i] + " "
    return Text("\n".join(r.rstrip() for r in rows), style=style)


def width_of(text: str) -> int:
    """Cells the large type of ``text`` takes."""
    return sum(len(_BOX[ch][0]) + 1 for ch in text if ch in _BOX) - 1 if text else 0
