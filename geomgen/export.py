"""STEP and STL files of web solids, and reading STEP back with its names.

OpenCascade (OCP, through geomgen.occ) and trimesh are imported inside the functions.
Every writer takes a folder or path it is given and writes only there (the
command line writes into a temporary folder and moves it into place).

STEP: AP214, millimetres, one named solid per body/plug, body first, each
its own product with its placement built into its geometry ("body",
"plug-1", ... in a web file; "web-a body", "web-a plug-1", ... in
crank.step, names from geomgen.solid); a header naming the file and geomgen
(not the kernel's defaults).  Each product's description (the third field of
its PRODUCT entity, free text a CAD program shows or ignores) says what the
solid is made of, e.g. "geomgen solid: cast-iron, density 7.2 g/cm^3", so that
`geomgen inspect` weighs it as planned.  The
schema and unit are process-wide settings of OpenCascade, so each export sets
them and puts the previous values back.

Beside them `web_sidecar` writes web-<name>.json: the density and material of
the body and of each plug, each plug's axis (to tell the pieces of the plugs
STL apart) and the sha256 of the files it describes, since an STL carries no
material at all.

STL: binary, one file for the body and one for all plugs.  The shape's old
triangulation is cleared first (a shape keeps its first mesh), the mesh is
made with an absolute chord tolerance and written by OpenCascade, then
re-read with numpy and repaired: coincident vertices merged (exactly, on the
single-precision coordinates the file holds) and the triangles that collapse
to a line or a point dropped (OpenCascade leaves them at cone apexes).  The
result is written only if it is a closed volume: every edge shared by exactly
two triangles that run it in opposite directions, and a positive enclosed
volume.  A mesh that fails that check goes through trimesh's general repair
(imported only then); still not closed, it is an error, not a file.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import tempfile
from pathlib import Path

import numpy as np

from .errors import VerificationFailed

#: default absolute chord tolerance (mm) and angular tolerance (rad) of STL meshes
STL_TOLERANCE_MM = 0.01
STL_ANGULAR_RAD = 0.1

_STEP_SCHEMA = "AP214IS"
_STEP_UNIT = "MM"


class _StepSettings:
    """Set the STEP write schema and unit for one export; restore them after."""

    def __enter__(self):
        from OCP.Interface import Interface_Static

        self._old = (Interface_Static.CVal_s("write.step.schema"), Interface_Static.CVal_s("write.step.unit"))
        Interface_Static.SetCVal_s("write.step.schema", _STEP_SCHEMA)
        Interface_Static.SetCVal_s("write.step.unit", _STEP_UNIT)
        return self

    def __exit__(self, *exc):
        from OCP.Interface import Interface_Static

        Interface_Static.SetCVal_s("write.step.schema", self._old[0])
        Interface_Static.SetCVal_s("write.step.unit", self._old[1])
        return False



#: FILE_NAME author and organization: geomgen does not know the person or the shop,
#: and an empty string is what ISO 10303-21 writes for a value not given
STEP_AUTHOR = ""
STEP_ORGANIZATION = ""


def _standalone(shapes):
    """Each shape as its own TopoDS_Shape with no placement and no shared
    topology: the STEP writer turns a second placement of a shape it has
    already seen into a reference to the first, and readers then see one
    solid where two were meant."""
    from OCP.BRepBuilderAPI import BRepBuilderAPI_Copy, BRepBuilderAPI_Transform
    from OCP.TopLoc import TopLoc_Location

    from . import occ

    seen, out = [], []
    for shape in shapes:
        raw = occ.raw(shape)
        if not raw.Location().IsIdentity():
            trsf = raw.Location().Transformation()
            bare = raw.Located(TopLoc_Location())
            raw = BRepBuilderAPI_Transform(bare, trsf, True).Shape()
        elif any(raw.IsPartner(s) for s in seen):
            raw = BRepBuilderAPI_Copy(raw, True, False).Shape()
        seen.append(raw)
        out.append(raw)
    return out


def _set_header(writer, *, file_name: str, description: str) -> None:
    """FILE_NAME and FILE_DESCRIPTION of the STEP header: the file's own
    name, geomgen as the originating system and preprocessor, author and
    organization left empty.  Transfer() has already put OpenCascade's
    default header on the model; MakeHeader(model) edits it in place and
    Write() keeps a header that is there."""
    from OCP.APIHeaderSection import APIHeaderSection_MakeHeader
    from OCP.TCollection import TCollection_HAsciiString

    from . import __version__

    header = APIHeaderSection_MakeHeader(writer.ChangeWriter().Model())
    me = f"geomgen {__version__}"
    header.SetName(TCollection_HAsciiString(file_name))
    header.SetAuthorValue(1, TCollection_HAsciiString(STEP_AUTHOR))
    header.SetOrganizationValue(1, TCollection_HAsciiString(STEP_ORGANIZATION))
    header.SetOriginatingSystem(TCollection_HAsciiString(me))
    header.SetPreprocessorVersion(TCollection_HAsciiString(me))
    header.SetAuthorisation(TCollection_HAsciiString(""))
    header.SetDescriptionValue(1, TCollection_HAsciiString(description))


#: how a product's description gives its solid's density: "density 7.2 g/cm^3" (the number as Python's repr
#: writes a float, so it reads back to the same double)
_DENSITY_TEXT = re.compile(r"\bdensity ([0-9][0-9.]*(?:[eE][-+]?[0-9]+)?) g/cm\^3")


def density_description(density_g_cm3: float, material: str | None = None) -> str:
    """The product description of a solid of this density: "geomgen solid: steel, density 7.85 g/cm^3"."""
    what = f"{material}, " if material else ""
    return f"geomgen solid: {what}density {float(density_g_cm3)!r} g/cm^3"


def density_from_description(text: str | None) -> float | None:
    """The density a product description written by `density_description` gives, g/cm^3, or None (for
    any other text: another program's description is not read as a density)."""
    if not (text or "").startswith("geomgen solid: "):
        return None
    m = _DENSITY_TEXT.search(text)
    return float(m.group(1)) if m else None


def _describe_products(writer, descriptions: dict[str, str]) -> None:
    """Set the description of each PRODUCT whose name is in `descriptions` (after Transfer, before Write)."""
    from OCP.StepBasic import StepBasic_Product
    from OCP.TCollection import TCollection_HAsciiString

    model = writer.ChangeWriter().Model()
    for i in range(1, model.NbEntities() + 1):
        entity = model.Value(i)
        if isinstance(entity, StepBasic_Product):
            text = descriptions.get(entity.Name().ToCString())
            if text is not None:
                entity.SetDescription(TCollection_HAsciiString(text))


def write_step(solids, path, *, description: str | None = None) -> Path:
    """Write named solids to one STEP file.

    solids : sequence of (name, shape) or (name, shape, density g/cm^3) or (name, shape, density, material
             name or None) (shape a TopoDS_Shape or a wrapper of one), in the order wanted in the file (body
             first); each becomes its own product, at the place its shape says, and a density becomes the
             product's description (`density_description`)
    path : the file to write
    description : FILE_DESCRIPTION text; default "geomgen <stem>: <the solids' names>"
    """
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.STEPCAFControl import STEPCAFControl_Writer
    from OCP.STEPControl import STEPControl_AsIs
    from OCP.TCollection import TCollection_ExtendedString
    from OCP.TDataStd import TDataStd_Name
    from OCP.TDocStd import TDocStd_Document
    from OCP.XCAFDoc import XCAFDoc_DocumentTool

    from . import occ  # noqa: F401  (the kernel, its messages kept off standard output)

    solids = [tuple(s) for s in solids]
    products = {str(s[0]): density_description(s[2], s[3] if len(s) > 3 else None)
                for s in solids if len(s) > 2 and s[2] is not None}
    doc = TDocStd_Document(TCollection_ExtendedString("XmlOcaf"))
    tool = XCAFDoc_DocumentTool.ShapeTool_s(doc.Main())
    for name, shape in zip([s[0] for s in solids], _standalone([s[1] for s in solids])):
        label = tool.AddShape(shape, False)
        TDataStd_Name.Set_s(label, TCollection_ExtendedString(str(name)))
    path = Path(path)
    with _StepSettings():
        writer = STEPCAFControl_Writer()
        writer.SetNameMode(True)
        if not writer.Transfer(doc, STEPControl_AsIs):
            raise VerificationFailed(f"{path.name}: the STEP writer refused the shapes")
        _describe_products(writer, products)
        if description is None:
            names = [str(s[0]) for s in solids]
            description = f"geomgen {path.stem}: " + ", ".join(names[:8]) + (", ..." if len(names) > 8 else "")
        _set_header(writer, file_name=path.name, description=description)
        status = writer.Write(str(path))
    if status != IFSelect_RetDone:
        raise VerificationFailed(f"{path.name}: the STEP writer failed (status {status})")
    return path


def step_header(path) -> dict:
    """The FILE_NAME and FILE_DESCRIPTION fields of a STEP file's header, as
    OpenCascade reads them back: {"name", "time_stamp", "author",
    "organization", "preprocessor_version", "originating_system",
    "authorisation", "description"} (author, organization, description: lists)."""
    from OCP.APIHeaderSection import APIHeaderSection_MakeHeader
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.STEPControl import STEPControl_Reader

    from . import occ  # noqa: F401  (the kernel, its messages kept off standard output)
    from .errors import BadInput

    reader = STEPControl_Reader()
    if reader.ReadFile(str(path)) != IFSelect_RetDone:
        raise BadInput(f"{path}: not a readable STEP file")
    h = APIHeaderSection_MakeHeader(reader.StepModel())

    def text(s):
        return "" if s is None else s.ToCString()

    return {"name": text(h.Name()), "time_stamp": text(h.TimeStamp()),
            "author": [text(h.AuthorValue(i)) for i in range(1, h.NbAuthor() + 1)],
            "organization": [text(h.OrganizationValue(i)) for i in range(1, h.NbOrganization() + 1)],
            "preprocessor_version": text(h.PreprocessorVersion()),
            "originating_system": text(h.OriginatingSystem()), "authorisation": text(h.Authorisation()),
            "description": [text(h.DescriptionValue(i)) for i in range(1, h.NbDescription() + 1)]}


def step_product_descriptions(path) -> dict[str, str]:
    """{product name: its description} of a STEP file (empty descriptions left out)."""
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.StepBasic import StepBasic_Product
    from OCP.STEPControl import STEPControl_Reader

    from . import occ  # noqa: F401  (the kernel, its messages kept off standard output)
    from .errors import BadInput

    reader = STEPControl_Reader()
    if reader.ReadFile(str(path)) != IFSelect_RetDone:
        raise BadInput(f"{path}: not a readable STEP file")
    model = reader.StepModel()
    out = {}
    for i in range(1, model.NbEntities() + 1):
        entity = model.Value(i)
        if isinstance(entity, StepBasic_Product) and entity.Description() is not None:
            text = entity.Description().ToCString()
            if text:
                out[entity.Name().ToCString()] = text
    return out


def read_step(path) -> list[tuple[str, object]]:
    """The top-level named shapes of a STEP file, in file order: (name, TopoDS_Shape)."""
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.STEPCAFControl import STEPCAFControl_Reader
    from OCP.TCollection import TCollection_ExtendedString
    from OCP.TDataStd import TDataStd_Name
    from OCP.TDF import TDF_LabelSequence
    from OCP.TDocStd import TDocStd_Document
    from OCP.XCAFDoc import XCAFDoc_DocumentTool

    from . import occ  # noqa: F401  (the kernel, its messages kept off standard output)
    from .errors import BadInput

    doc = TDocStd_Document(TCollection_ExtendedString("XmlOcaf"))
    reader = STEPCAFControl_Reader()
    reader.SetNameMode(True)
    if reader.ReadFile(str(path)) != IFSelect_RetDone or not reader.Transfer(doc):
        raise BadInput(f"{path}: not a readable STEP file")
    tool = XCAFDoc_DocumentTool.ShapeTool_s(doc.Main())
    labels = TDF_LabelSequence()
    tool.GetFreeShapes(labels)
    out = []
    for i in range(1, labels.Length() + 1):
        label = labels.Value(i)
        attr = TDataStd_Name()
        name = (attr.Get().ToExtString() if label.FindAttribute(TDataStd_Name.GetID_s(), attr)
                else f"shape-{i}")
        out.append((name, tool.GetShape_s(label)))
    return out


def _compound(shapes):
    from OCP.BRep import BRep_Builder
    from OCP.TopoDS import TopoDS_Compound

    from . import occ

    comp = TopoDS_Compound()
    builder = BRep_Builder()
    builder.MakeCompound(comp)
    for s in shapes:
        builder.Add(comp, occ.raw(s))
    return comp


#: one binary STL triangle record: normal, three vertices (float32), attribute count
STL_RECORD = np.dtype([("normal", "<f4", (3,)), ("vertices", "<f4", (3, 3)), ("attr", "<u2")])
_STL_HEADER = b"geomgen binary STL, millimetres".ljust(80, b" ")


def read_stl_triangles(path) -> np.ndarray:
    """(n, 3, 3) float32, mm: the triangles of a binary STL file, as stored.

    Raises BadInput if the file is not binary STL of the length its count says."""
    data = Path(path).read_bytes()
    count = int.from_bytes(data[80:84], "little") if len(data) >= 84 else -1
    if count < 0 or len(data) != 84 + STL_RECORD.itemsize * count:
        from .errors import BadInput
        raise BadInput(f"{path}: not a binary STL file (its length does not match its triangle count)")
    return np.frombuffer(data, dtype=STL_RECORD, count=count, offset=84)["vertices"]


def indexed_mesh(triangles) -> tuple[np.ndarray, np.ndarray]:
    """(vertices (m, 3) float32, faces (k, 3) int) from (n, 3, 3) triangles: vertices with
    bit-equal coordinates merged, triangles left with a repeated vertex dropped.

    The merge is exact on the float32 values a binary STL stores, so the file written from
    the result re-reads with the same topology (+0.0 and -0.0 count as one value)."""
    corners = np.ascontiguousarray(np.asarray(triangles, dtype=np.float32).reshape(-1, 3) + np.float32(0.0))
    keys = corners.view(np.dtype((np.void, corners.dtype.itemsize * 3))).ravel()
    _, first, inverse = np.unique(keys, return_index=True, return_inverse=True)
    faces = inverse.reshape(-1, 3)
    keep = (faces[:, 0] != faces[:, 1]) & (faces[:, 1] != faces[:, 2]) & (faces[:, 2] != faces[:, 0])
    return corners[first], faces[keep]


def closed_volume_problem(vertices, faces) -> str | None:
    """Why the indexed mesh is not a closed, consistently wound volume, or None if it is.

    Closed and consistently wound: every directed edge occurs once and its reverse once
    (each edge shared by exactly two triangles running it in opposite directions, the
    test trimesh calls watertight plus winding-consistent); then the enclosed volume,
    the sum of det[a, b, c] / 6 over the triangles, must be positive (outward normals)."""
    if len(faces) == 0:
        return "no triangles"
    n = np.int64(len(vertices))
    a = faces.astype(np.int64)
    b = np.roll(a, -1, axis=1)
    edges = (a * n + b).ravel()
    reverse = (b * n + a).ravel()
    edges.sort()
    if np.any(edges[1:] == edges[:-1]):
        return "an edge is run twice in the same direction (inconsistent winding or a fold)"
    reverse.sort()
    if not np.array_equal(edges, reverse):
        return "an edge belongs to one triangle only (a hole in the mesh)"
    tri = vertices.astype(np.float64)[faces]
    volume = np.einsum("ij,ij->i", tri[:, 0], np.cross(tri[:, 1], tri[:, 2])).sum() / 6.0
    if not volume > 0:
        return f"enclosed volume {volume:.6g} mm^3 is not positive (normals point inwards)"
    return None


def _write_indexed_stl(vertices, faces, path) -> None:
    tri = vertices[faces]
    normals = np.cross((tri[:, 1] - tri[:, 0]).astype(np.float64), (tri[:, 2] - tri[:, 0]).astype(np.float64))
    length = np.linalg.norm(normals, axis=1, keepdims=True)
    normals = np.divide(normals, length, out=np.zeros_like(normals), where=length > 0)
    records = np.zeros(len(faces), dtype=STL_RECORD)
    records["normal"] = normals
    records["vertices"] = tri
    with open(path, "wb") as out:
        out.write(_STL_HEADER)
        out.write(len(faces).to_bytes(4, "little"))
        out.write(records.tobytes())


def repaired_mesh(stl_path):
    """The STL re-read by trimesh with coincident vertices merged, zero-area
    triangles dropped and normals fixed (a trimesh.Trimesh): the general
    repair, for a mesh the quick one in `write_stl` did not close."""
    import trimesh

    mesh = trimesh.load_mesh(str(stl_path), file_type="stl", process=True)
    mesh.merge_vertices()
    mesh.update_faces(mesh.nondegenerate_faces())
    mesh.remove_unreferenced_vertices()
    if not mesh.is_winding_consistent:
        mesh.fix_normals()
    return mesh


def _mesh_untriangulated_faces(shape, params) -> None:
    """Mesh with the default triangulator the faces the Delabella one left bare.

    Delabella leaves the side face of a web whose rim is a spline or an ellipse (a surface of linear
    extrusion of that curve) without triangles (seen with OCP 7.9); the default triangulator meshes
    it from the same edge nodes, so the mesh stays closed."""
    from OCP.BRep import BRep_Tool
    from OCP.BRepMesh import BRepMesh_IncrementalMesh
    from OCP.IMeshTools import IMeshTools_MeshAlgoType_Watson
    from OCP.TopAbs import TopAbs_FACE
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopLoc import TopLoc_Location
    from OCP.TopoDS import TopoDS

    bare = []
    explorer = TopExp_Explorer(shape, TopAbs_FACE)
    while explorer.More():
        face = TopoDS.Face_s(explorer.Current())
        if BRep_Tool.Triangulation_s(face, TopLoc_Location()) is None:
            bare.append(face)
        explorer.Next()
    if not bare:
        return
    params.MeshAlgo = IMeshTools_MeshAlgoType_Watson
    params.InParallel = False
    for face in bare:
        BRepMesh_IncrementalMesh(face, params)


def write_stl(shapes, path, *, tolerance: float = STL_TOLERANCE_MM,
              angular_tolerance: float = STL_ANGULAR_RAD) -> Path:
    """Mesh `shapes` (one shape or a sequence, written as one mesh) and write
    a binary STL that re-reads as a closed volume.

    tolerance : absolute chord deviation, mm;  angular_tolerance : rad
    Raises VerificationFailed if the repaired mesh is not a closed volume.
    """
    from OCP.BRepMesh import BRepMesh_IncrementalMesh
    from OCP.BRepTools import BRepTools
    from OCP.IMeshTools import IMeshTools_MeshAlgoType_Delabella, IMeshTools_Parameters
    from OCP.StlAPI import StlAPI_Writer

    if not (tolerance > 0 and angular_tolerance > 0):
        from .errors import BadInput
        raise BadInput(f"stl tolerance: must be > 0 (got {tolerance} mm, {angular_tolerance} rad)")
    shape = _compound(shapes if isinstance(shapes, (list, tuple)) else [shapes])
    BRepTools.Clean_s(shape)  # a shape keeps its first triangulation otherwise
    params = IMeshTools_Parameters()
    params.Deflection = float(tolerance)
    params.Angle = float(angular_tolerance)
    params.Relative = False
    params.InParallel = True
    # the Delabella triangulator: same nodes, 4x faster than the default on a
    # face pierced by ~100 holes (measured here, 4.8 s -> 1.1 s)
    params.MeshAlgo = IMeshTools_MeshAlgoType_Delabella
    mesher = BRepMesh_IncrementalMesh(shape, params)
    if not mesher.IsDone():
        raise VerificationFailed(f"{Path(path).name}: meshing failed")
    _mesh_untriangulated_faces(shape, params)
    path = Path(path)
    fd, raw = tempfile.mkstemp(suffix=".stl", dir=path.parent)
    os.close(fd)
    try:
        writer = StlAPI_Writer()
        writer.ASCIIMode = False
        if not writer.Write(shape, raw):
            raise VerificationFailed(f"{path.name}: the STL writer failed")
        vertices, faces = indexed_mesh(read_stl_triangles(raw))
        problem = closed_volume_problem(vertices, faces)
        if problem is not None:
            # the general repair (slower, and trimesh costs a second to import)
            mesh = repaired_mesh(raw)
            vertices, faces = indexed_mesh(mesh.triangles)
            problem = closed_volume_problem(vertices, faces)
    finally:
        os.unlink(raw)
    if problem is not None:
        raise VerificationFailed(f"{path.name}: the mesh is not a closed volume after repair: {problem}")
    _write_indexed_stl(vertices, faces, path)
    return path


def web_step_solids(web, body_material: str | None = None) -> list[tuple]:
    """(name, shape, density, material) of every solid of a WebSolid, for `write_step`: the body of
    `body_material` (a name, or None when the job gives a density), each plug of its feature's material."""
    out = [(web.solids()[0][0], web.body, web.density_g_cm3, body_material)]
    for p in web.plugs:
        out.append((p.name, p.shape, p.density_g_cm3, getattr(web.features[p.index], "material", None)))
    return out


def export_web(web, folder, *, tolerance: float = STL_TOLERANCE_MM,
               angular_tolerance: float = STL_ANGULAR_RAD, body_material: str | None = None) -> dict[str, Path]:
    """Write web-<name>.step, web-<name>.stl and (with plugs) web-<name>-plugs.stl
    into `folder`; returns {"step": path, "stl": path, "plugs_stl": path?}.
    body_material : the web's material name for the STEP's product description (its density is the solid's)."""
    folder = Path(folder)
    stem = f"web-{web.name}"
    out = {"step": write_step(web_step_solids(web, body_material), folder / f"{stem}.step",
                              description=f"geomgen web {web.name}: body and plugs in the web frame"),
           "stl": write_stl(web.body, folder / f"{stem}.stl", tolerance=tolerance,
                            angular_tolerance=angular_tolerance)}
    if web.plugs:
        out["plugs_stl"] = write_stl([p.shape for p in web.plugs], folder / f"{stem}-plugs.stl",
                                     tolerance=tolerance, angular_tolerance=angular_tolerance)
    return out


def write_crank_step(solids, path) -> Path:
    """crank.step from `solid.crank_assembly` output: (name, shape, density),
    every body and plug of both webs its own named solid, in the crank frame,
    each product's description giving its density."""
    return write_step(list(solids), path,
                      description="geomgen crank: both webs in the crank frame, the frame of web a")


# ------------------------------------------------------------------ web-<name>.json
#: what a web's sidecar file says it is, on its first key
SIDECAR_WHAT = ("geomgen: the materials of web-{name}.step and its STL files, for `geomgen inspect`; "
                "the sha256 of each file it describes")


def sidecar_name(web_name: str) -> str:
    return f"web-{web_name}.json"


def web_sidecar(web, *, body_material: str | None, files: dict[str, bytes]) -> bytes:
    """web-<name>.json of a WebSolid: the body's and each plug's material and density (g/cm^3, exact),
    each plug's axis (x, y mm, web frame), which file holds what, and the sha256 of each of them.

    files : {file name: bytes} of the run; the web's web-<name>.step, .stl and -plugs.stl are looked up
    in it.  Same web, same files, same bytes (sorted keys)."""
    from . import __version__

    stem = f"web-{web.name}"
    names = [f"{stem}.step", f"{stem}.stl"] + ([f"{stem}-plugs.stl"] if web.plugs else [])
    doc = {
        "what": SIDECAR_WHAT.format(name=web.name),
        "geomgen_version": __version__,
        "web": web.name,
        "units": {"length": "mm", "density": "g/cm^3"},
        "frame": "crank axis = Z through the origin, crankpin on +Y; z from 0 (inner face) to the thickness",
        "step": f"{stem}.step",
        "stl": f"{stem}.stl",
        "plugs_stl": f"{stem}-plugs.stl" if web.plugs else None,
        "body": {"solid": web.solids()[0][0], "material": body_material, "density_g_cm3": web.density_g_cm3},
        "plugs": [{"solid": p.name, "feature": p.index + 1, "x_mm": web.features[p.index].x,
                   "y_mm": web.features[p.index].y, "diameter_mm": web.features[p.index].diameter,
                   "length_mm": web.features[p.index].length,
                   "material": getattr(web.features[p.index], "material", None), "density_g_cm3": p.density_g_cm3}
                  for p in web.plugs],
        "sha256": {n: hashlib.sha256(files[n]).hexdigest() for n in names if n in files},
    }
    return (json.dumps(doc, indent=2, sort_keys=True) + "\n").encode()
