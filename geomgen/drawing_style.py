"""How drawing.dxf is styled, so that every DXF reader shows the same drawing.

Some readers (LibreCAD among them) draw a dimension from the header's
dimension variables, others from the dimension style the entity names, others
from the block the writer rendered.  The drawing therefore carries one
dimension style of its own, GEOMGEN_MM, and the header holds the same values,
with the style made current ($DIMSTYLE).  Only the tables the DXF reference
requires are kept besides: the "Standard" text style and dimension style,
and the two line types the drawing uses.

Units: millimetres, drawn at full size, text sized for the paper (2.5 mm is
the common lettering height of ISO 3098 / ISO 129-1 drawings, common
practice).  Dimensions read to 0.01 mm and angles to 0.1 deg, trailing zeros
left off (a 7 mm hole reads "7"), "." as decimal sign.
"""

from __future__ import annotations

DIM_STYLE = "GEOMGEN_MM"
TEXT_STYLE = "Standard"          # required by the DXF reference; font "txt", which every reader maps
DIM_COLOUR = 4                   # cyan: dimensions apart from the outline (ACI)

#: the dimension style, in the DXF reference's variable names (lower case; paper mm at full size)
DIM_VARS: dict[str, float | int | str] = {
    "dimscale": 1.0,      # overall scale: the drawing is at full size
    "dimlfac": 1.0,       # measured length x 1: one drawing unit is one mm
    "dimtxt": 2.5,        # text height, mm
    "dimasz": 2.5,        # arrow length, mm
    "dimexo": 1.0,        # gap between the feature and the extension line, mm
    "dimexe": 1.5,        # extension line past the dimension line, mm
    "dimgap": 0.8,        # gap around the text, mm
    "dimdli": 4.0,        # spacing of stacked dimension lines, mm
    "dimcen": 0.0,        # no centre mark: the radial dimension marks each centre
    "dimdec": 2,          # 0.01 mm
    "dimadec": 1,         # 0.1 deg
    "dimzin": 8,          # trailing zeros left off ("7", "41.23")
    "dimazin": 2,         # the same for angles
    "dimdsep": 46,        # decimal sign "."
    "dimlunit": 2,        # decimal lengths
    "dimaunit": 0,        # decimal degrees
    "dimtad": 1,          # text above the dimension line
    "dimjust": 0,         # centred along the line
    "dimtih": 0,          # text aligned with the line inside ...
    "dimtoh": 0,          # ... and outside the extension lines
    "dimtix": 0,
    "dimtofl": 1,         # a dimension line between the extension lines even when the text is outside
    "dimatfit": 3,
    "dimtmove": 0,
    "dimtsz": 0.0,        # arrows, not ticks
    "dimblk": "",         # closed filled arrow
    "dimtfac": 1.0,
    "dimrnd": 0.0,
    "dimalt": 0,
    "dimclrd": DIM_COLOUR,
    "dimclre": DIM_COLOUR,
    "dimclrt": DIM_COLOUR,
}

#: header variables besides the $DIM... ones
HEADER_VARS: dict[str, float | int | str] = {
    "$INSUNITS": 4,       # millimetres
    "$MEASUREMENT": 1,    # metric
    "$LUNITS": 2,         # decimal
    "$LUPREC": 2,
    "$AUNITS": 0,         # decimal degrees
    "$AUPREC": 1,
    "$ANGBASE": 0.0,
    "$ANGDIR": 0,         # counter-clockwise
    "$TEXTSTYLE": TEXT_STYLE,
    "$TEXTSIZE": 2.5,
    "$LTSCALE": 1.0,
    "$CELTSCALE": 1.0,
    "$PSLTSCALE": 1,
    "$DIMSTYLE": DIM_STYLE,
    "$DIMTXSTY": TEXT_STYLE,
}

#: line types in mm: ISO 128 type 02 (dashed: 12 d dash, 3 d gap) and type 04 (long dash dotted: 24 d,
#: 3 d gap, 0.5 d dot, 3 d gap) for a line width d = 0.25 mm (from memory); (name, description, pattern)
LINETYPES = (
    ("DASHED", "dashed, 3 mm dash 0.75 mm gap", [3.75, 3.0, -0.75]),
    ("CENTER", "long dash dotted, 6 mm dash", [7.625, 6.0, -0.75, 0.0, -0.75]),
)


def header_values() -> dict[str, float | int | str]:
    """Every header variable the drawing sets, $DIM... ones included, by DXF name."""
    values = {f"${k.upper()}": v for k, v in DIM_VARS.items()}
    values.update(HEADER_VARS)
    return values


def new_document():
    """An empty R2010 drawing in mm with the project's styles and nothing else (ezdxf Drawing)."""
    import ezdxf

    doc = ezdxf.new("R2010", setup=False, units=4)
    for name, description, pattern in LINETYPES:
        doc.linetypes.add(name, pattern=pattern, description=description)
    doc.styles.get(TEXT_STYLE).dxf.font = "txt"
    style = doc.dimstyles.new(DIM_STYLE)
    for key, value in DIM_VARS.items():
        style.set_dxf_attrib(key, value)
    style.set_dxf_attrib("dimtxsty", TEXT_STYLE)
    # "Standard" stays (the reference requires it) but says the same, for a reader that falls back on it
    standard = doc.dimstyles.get("Standard")
    for key, value in DIM_VARS.items():
        standard.set_dxf_attrib(key, value)
    for key, value in header_values().items():
        doc.header[key] = value
    return doc
