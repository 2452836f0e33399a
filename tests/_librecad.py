"""Print a DXF with LibreCAD and read back the words it drew.

LibreCAD draws text with its own stroke fonts (LFF files), so its PDF holds no
text for pdftotext: every letter is a few stroked line and arc segments.  To
read what it printed, a string is laid out from the same font file LibreCAD
used (glyph vertices in a 9-unit cap height, letters advanced by their width
plus the font's letter spacing) and looked for among the segment ends of the
PDF under every scale and rotation (the dimension texts run along their
dimension lines).  A string is found only when every vertex of every glyph
lands on a drawn segment end, so "7" is not found where "1" was drawn, and a
test asks for the longer wrong reading (e.g. "700") to be absent.

Needs the Debian packages librecad (dxf2pdf) and poppler-utils (pdfinfo);
the PDF is parsed here with zlib and a small reader of the content stream.
"""

from __future__ import annotations

import math
import os
import re
import shutil
import subprocess
import zlib
from pathlib import Path

import pytest

FONT_DIRS = (Path("/usr/share/librecad/fonts"),)
CAP_UNITS = 9.0                       # LFF glyphs are drawn in a 9-unit cap height
PT_MM = 25.4 / 72.0


def need_librecad() -> None:
    """Skip when LibreCAD or poppler is missing, but fail under CI (the CI script installs them)."""
    missing = [tool for tool in ("librecad", "pdfinfo") if shutil.which(tool) is None]
    if missing:
        if os.environ.get("CI"):
            pytest.fail(f"{', '.join(missing)} missing under CI: .ci/run installs librecad and poppler-utils")
        pytest.skip(f"{', '.join(missing)} not installed (Debian packages librecad, poppler-utils)")


def print_pdf(dxf: Path, folder: Path) -> Path:
    """`librecad dxf2pdf -a -m -t folder dxf` (fit to the page, black on white); the PDF it wrote."""
    folder.mkdir(parents=True, exist_ok=True)
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen", XDG_RUNTIME_DIR=str(folder))
    done = subprocess.run(["librecad", "dxf2pdf", "-a", "-m", "-t", str(folder), str(dxf)], env=env,
                          capture_output=True, text=True, timeout=180, stdin=subprocess.DEVNULL)
    pdf = folder / (dxf.stem + ".pdf")
    if done.returncode != 0 or not pdf.exists():
        raise RuntimeError(f"librecad dxf2pdf failed ({done.returncode}): {done.stderr[-500:]}")
    return pdf


def pdf_info(pdf: Path) -> dict:
    """pdfinfo's fields, e.g. {"Pages": "1", "Page size": "1191 x 842 pts (A3)"}."""
    out = subprocess.run(["pdfinfo", str(pdf)], capture_output=True, text=True, check=True).stdout
    return {k.strip(): v.strip() for k, v in (line.split(":", 1) for line in out.splitlines() if ":" in line)}


# ---------------------------------------------------------------- the PDF's strokes

_TOKEN = re.compile(rb"-?\d*\.\d+|-?\d+|[A-Za-z\*']+|\[[^\]]*\]|/[^\s/\[\]<>()]+")


def segment_ends(pdf: Path) -> list[tuple[float, float]]:
    """The end points of every stroked straight or curved piece on the page, mm on the paper.

    Only the operators Qt's PDF writer uses for LibreCAD's drawings are read:
    q / Q / cm for the transform, m / l / c for the path."""
    data = pdf.read_bytes()
    points: list[tuple[float, float]] = []
    for m in re.finditer(rb"/FlateDecode\s*>>\s*stream\r?\n", data):
        end = data.find(b"endstream", m.end())
        try:
            content = zlib.decompress(data[m.end():end])
        except zlib.error:
            continue
        matrix, stack, numbers = (1.0, 0.0, 0.0, 1.0, 0.0, 0.0), [], []
        for tok in _TOKEN.findall(content):
            if tok[:1].isdigit() or tok[:1] in b"-.":
                numbers.append(float(tok))
                continue
            op = tok.decode("latin1")
            if op == "q":
                stack.append(matrix)
            elif op == "Q" and stack:
                matrix = stack.pop()
            elif op == "cm" and len(numbers) >= 6:
                a, b, c, d, e, f = numbers[-6:]
                A, B, C, D, E, F = matrix
                matrix = (a * A + b * C, a * B + b * D, c * A + d * C, c * B + d * D,
                          e * A + f * C + E, e * B + f * D + F)
            elif (op in ("m", "l") and len(numbers) >= 2) or (op == "c" and len(numbers) >= 6):
                points.append(_apply(matrix, numbers[-2], numbers[-1]))
            numbers = []
    return points


def _apply(m, x, y):
    a, b, c, d, e, f = m
    return ((a * x + c * y + e) * PT_MM, (b * x + d * y + f) * PT_MM)


# ---------------------------------------------------------------- the font

def _font_text(name: str) -> str:
    for folder in FONT_DIRS:
        path = folder / f"{name}.lff"
        if path.exists():
            return path.read_text(encoding="utf-8")
    raise FileNotFoundError(f"LibreCAD font {name}.lff not found in {FONT_DIRS}")


class Font:
    """Glyph vertices and advances of one LibreCAD font, in font units (cap height 9)."""

    def __init__(self, name: str = "standard"):
        text = _font_text(name)
        self.letter_spacing = float(re.search(r"LetterSpacing:\s*([\d.]+)", text).group(1))
        self.word_spacing = float(re.search(r"WordSpacing:\s*([\d.]+)", text).group(1))
        self._raw: dict[str, list[str]] = {}
        for m in re.finditer(r"^\[([0-9A-Fa-f]{4,})\][^\n]*\n((?:[^\n\[][^\n]*\n?)*)", text, re.M):
            self._raw[chr(int(m.group(1), 16))] = [ln.strip() for ln in m.group(2).splitlines() if ln.strip()]

    def strokes(self, ch: str) -> list[list[tuple[float, float, bool]]]:
        """The glyph's polylines: vertices (x, y, arc) where `arc` says the piece that ends there
        is an arc (a bulge, "A"); the vertices are where LibreCAD starts and ends each piece."""
        out = []
        for line in self._raw[ch]:
            if line.startswith("C"):
                out += self.strokes(chr(int(line[1:], 16)))
                continue
            pts = []
            for vertex in line.split(";"):
                fields = vertex.split(",")
                pts.append((float(fields[0]), float(fields[1]), any(f.startswith("A") for f in fields[2:])))
            out.append(pts)
        return out

    def width(self, ch: str) -> float:
        """The right-most x of a glyph, arcs' bulges included (LibreCAD advances by its extent)."""
        xs = []
        for line in self._raw[ch]:
            if line.startswith("C"):
                xs.append(self.width(chr(int(line[1:], 16))))
                continue
            prev = None
            for vertex in line.split(";"):
                fields = vertex.split(",")
                p = (float(fields[0]), float(fields[1]))
                xs.append(p[0])
                bulge = next((float(f[1:]) for f in fields[2:] if f.startswith("A")), 0.0)
                if prev is not None and bulge:
                    xs += [x for x, _ in _arc_points(prev, p, bulge)]
                prev = p
        return max(xs, default=0.0)

    def layout(self, text: str) -> list[list[tuple[float, float]]]:
        """Every glyph's polylines placed along the baseline as LibreCAD spaces them."""
        x, out = 0.0, []
        for ch in text:
            if ch == " ":
                x += self.word_spacing
                continue
            glyph = self.strokes(ch)
            out += [[(x + px, py, arc) for px, py, arc in poly] for poly in glyph]
            x += self.width(ch) + self.letter_spacing
        return out


def _arc_points(p, q, bulge: float, n: int = 32):
    """Points along the arc from p to q with DXF bulge = tan(sweep / 4) (positive counter-clockwise)."""
    sweep = 4.0 * math.atan(bulge)
    chord = math.dist(p, q)
    radius = chord / (2.0 * math.sin(abs(sweep) / 2.0))
    mx, my = (p[0] + q[0]) / 2.0, (p[1] + q[1]) / 2.0
    ux, uy = (q[0] - p[0]) / chord, (q[1] - p[1]) / chord
    h = radius * math.cos(sweep / 2.0) * (1 if sweep > 0 else -1)
    cx, cy = mx - uy * h, my + ux * h
    a0 = math.atan2(p[1] - cy, p[0] - cx)
    return [(cx + radius * math.cos(a0 + sweep * k / n), cy + radius * math.sin(a0 + sweep * k / n))
            for k in range(n + 1)]


# ---------------------------------------------------------------- finding a string

class Page:
    """The segment ends of a printed page, hashed for near-point look-ups."""

    def __init__(self, pdf: Path):
        self.points = segment_ends(pdf)
        self._cell = 0.05
        self._grid: dict[tuple[int, int], list[tuple[float, float]]] = {}
        for p in self.points:
            self._grid.setdefault((int(p[0] // self._cell), int(p[1] // self._cell)), []).append(p)
        self._pairs = None

    def near(self, p, tol: float) -> bool:
        reach = int(math.ceil(tol / self._cell))
        cx, cy = int(p[0] // self._cell), int(p[1] // self._cell)
        for i in range(cx - reach, cx + reach + 1):
            for j in range(cy - reach, cy + reach + 1):
                for q in self._grid.get((i, j), ()):
                    if (q[0] - p[0]) ** 2 + (q[1] - p[1]) ** 2 <= tol * tol:
                        return True
        return False

    def find(self, text: str, font: Font, *, min_height_mm: float = 0.5, max_height_mm: float = 20.0) -> list[dict]:
        """Where `text` is drawn: [{"height_mm", "angle_deg", "at"}], height = cap height on the paper."""
        polys = font.layout(text)
        # the longest straight stroke of the string anchors the search
        straight = [(a[:2], b[:2]) for poly in polys for a, b in zip(poly, poly[1:]) if not b[2]]
        anchor = max(straight, key=lambda s: math.dist(*s))
        t_len = math.dist(*anchor)
        vertices = [p[:2] for poly in polys for p in poly]
        found = []
        pts = self.points
        lo, hi = t_len * min_height_mm / CAP_UNITS, t_len * max_height_mm / CAP_UNITS
        for k in range(len(pts) - 1):
            a, b = pts[k], pts[k + 1]
            seg = math.dist(a, b)
            if not lo <= seg <= hi:
                continue
            for p, q in ((a, b), (b, a)):
                scale = seg / t_len
                rot = math.atan2(q[1] - p[1], q[0] - p[0]) - math.atan2(anchor[1][1] - anchor[0][1],
                                                                        anchor[1][0] - anchor[0][0])
                cs, sn = math.cos(rot) * scale, math.sin(rot) * scale
                ox = p[0] - (cs * anchor[0][0] - sn * anchor[0][1])
                oy = p[1] - (sn * anchor[0][0] + cs * anchor[0][1])
                tol = max(0.06 * CAP_UNITS * scale, 0.03)
                if all(self.near((ox + cs * vx - sn * vy, oy + sn * vx + cs * vy), tol) for vx, vy in vertices):
                    hit = {"height_mm": CAP_UNITS * scale, "angle_deg": math.degrees(rot) % 360.0, "at": (ox, oy)}
                    if not any(math.dist(hit["at"], h["at"]) < 0.5 * hit["height_mm"] for h in found):
                        found.append(hit)
        return found
