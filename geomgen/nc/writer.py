"""Words and blocks of an ISO 6983 word-address program, in the program's units.

Only plain codes: G0 G1 G2 G3 (arcs by I J, the centre relative to the start), G17, G20 / G21, G40,
G43 H / G49, G54, G80, G81, G83, G90, G94, G98, M0, M3, M5, M6 with T, M8, M9, M30; comments in
parentheses, plain ASCII, no nesting; '%' at the start and the end.  Internally everything is in mm;
`Writer` turns lengths into the program's unit (mm, or inch for sheet_units = "inch") as it writes.

Resolution: 0.001 mm or 0.0001 in (common practice for controllers); feeds to 0.1 mm/min or
0.01 in/min; spindle speeds in whole rpm.
"""

from __future__ import annotations

import textwrap

INCH = 25.4
#: decimals of a length / of a feed per minute, by program unit
LENGTH_DECIMALS = {"mm": 3, "inch": 4}
FEED_DECIMALS = {"mm": 1, "inch": 2}
#: the widest comment line; some controls refuse long blocks (common practice)
COMMENT_WIDTH = 72


def _fixed(value: float, decimals: int) -> str:
    text = f"{value:.{decimals}f}"
    return text[1:] if text.startswith("-") and float(text) == 0 else text


def plain(text: str) -> str:
    """A comment's text as every control reads it: ASCII, no parentheses inside, no ';' (an end of block to
    some controls, a comment to others) and no '%' (the tape's start and end)."""
    out = text.replace("(", "[").replace(")", "]").replace(";", ",").replace("%", " percent")
    out = out.replace("×", "x").replace("°", " deg").replace("–", "-")
    out = out.replace("—", "-").replace("≥", ">=").replace("≤", "<=")
    return out.encode("ascii", "replace").decode("ascii")


class Writer:
    """Builds the program text line by line; lengths are given in mm."""

    def __init__(self, units: str):
        self.units = units
        self.scale = 1.0 if units == "mm" else 1.0 / INCH
        self.lines: list[str] = []

    # ---------------------------------------------------------------- formatting
    def length(self, mm: float) -> str:
        return _fixed(mm * self.scale, LENGTH_DECIMALS[self.units])

    def feed(self, mm_min: float) -> str:
        return _fixed(mm_min * self.scale, FEED_DECIMALS[self.units])

    def unit_name(self) -> str:
        return "mm" if self.units == "mm" else "in"

    def show(self, mm: float) -> str:
        """A length for a comment, in the program's unit with its name."""
        return f"{self.length(mm)} {self.unit_name()}"

    # ---------------------------------------------------------------- lines
    def comment(self, text: str) -> None:
        for part in textwrap.wrap(plain(text), COMMENT_WIDTH - 2, break_long_words=True) or [""]:
            self.lines.append(f"({part})")

    def block(self, *words: str) -> None:
        self.lines.append(" ".join(w for w in words if w))

    def _axes(self, x=None, y=None, z=None) -> list[str]:
        return [f"{a}{self.length(v)}" for a, v in (("X", x), ("Y", y), ("Z", z)) if v is not None]

    def rapid(self, x=None, y=None, z=None, *, extra: tuple[str, ...] = ()) -> None:
        self.block("G0", *extra, *self._axes(x, y, z))

    def line(self, x=None, y=None, z=None, *, f: float) -> None:
        self.block("G1", *self._axes(x, y, z), f"F{self.feed(f)}")

    def arc(self, *, cw: bool, x: float, y: float, i: float, j: float, z: float | None = None, f: float) -> None:
        self.block("G2" if cw else "G3", *self._axes(x, y, z), f"I{self.length(i)}", f"J{self.length(j)}",
                   f"F{self.feed(f)}")

    def cycle(self, code: str, *, x: float, y: float, z: float, r: float, f: float, q: float | None = None) -> None:
        words = ["G98", code, *self._axes(x, y, z), f"R{self.length(r)}"]
        if q is not None:
            words.append(f"Q{self.length(q)}")
        words.append(f"F{self.feed(f)}")
        self.block(*words)

    def text(self) -> str:
        return "\n".join(["%", *self.lines, "%"]) + "\n"
