"""Independent checks of a web: exact B-rep properties and mesh properties,
compared with the analytic prediction.

Three figures of the same web come from three independent roads:
- predicted: Green's theorem on the loops and closed forms per feature
  (geomgen.section / geomgen.features), no kernel;
- exact: OpenCascade's volume integrals over the B-rep (GProp), one property
  set per solid at its own density, merged by MassProps `+`;
- mesh: trimesh (an independent, general-purpose library) re-reads the
  exported STL files and integrates them, each closed plug piece at its own
  density.

Exact vs predicted must agree to round-off: beyond UNBALANCE_REL (1e-4) of
the unbalance scale it is a modelling bug and raises VerificationFailed.
The unbalance scale is max(|U_exact|, m * 1 mm): a web whose unbalance is
near zero is still held to a centre-of-mass agreement of 1e-4 mm.

Mesh vs exact is bounded by the chord tolerance delta: every triangle lies
within delta of the surface it approximates, and a planar face meshes into
its own plane, so the volume between mesh and B-rep is at most
delta * A_curved (the area of the non-planar faces) and each moment at most
rho * delta * A_face times the face's largest lever arm (r for the
unbalance, r^2 for the moment of inertia about Z), summed over faces.  For a singly curved surface the
segment between chord and arc is a parabolic segment of area (2/3) * c *
delta, so the expected loss is about (2/3) * delta * A_curved; the stated
bound delta * A_curved is on the safe side of that.
"""

from __future__ import annotations

import math

import numpy as np

from .errors import BadInput, VerificationFailed
from .massprops import MassProps

#: exact vs predicted unbalance, relative to the unbalance scale
UNBALANCE_REL = 1e-4
#: length in the unbalance scale m * L for webs of near-zero unbalance, mm
UNBALANCE_LENGTH_MM = 1.0


#: relative error asked of OpenCascade's volume integration (its adaptive Gauss rule)
GPROP_EPS = 1e-11



def solid_massprops(shape, density_g_cm3: float) -> MassProps:
    """Exact mass properties of one solid of uniform density (OpenCascade GProp).

    OpenCascade's MatrixOfInertia is about the centre of mass with the
    products carrying the minus sign (Ixy = -integral x y dm), the same
    convention as `MassProps.from_centroidal`; tests/test_verify.py checks it
    on an L-shaped prism against its two boxes.
    """
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    from . import occ

    props = GProp_GProps()
    # with a relative error bound: GProp's default integration leaves ~3e-7 of the volume on faces
    # trimmed by the curves where two cylinders meet (a radial hole in a round rim)
    BRepGProp.VolumeProperties_s(occ.raw(shape), props, GPROP_EPS)
    volume = props.Mass()
    if not volume > 0:
        raise VerificationFailed(f"a solid has volume {volume} mm^3; the B-rep is not a closed solid")
    rho = float(density_g_cm3) * 1e-3  # g/mm^3
    c = props.CentreOfMass()
    mat = props.MatrixOfInertia()
    inertia = np.array([[mat.Value(i, j) for j in (1, 2, 3)] for i in (1, 2, 3)])
    return MassProps.from_centroidal(mass=rho * volume, com=(c.X(), c.Y(), c.Z()),
                                     inertia_com=rho * inertia, volume=volume)


def surface_area(shape) -> float:
    """Area of all faces of a shape, mm^2 (for the mesh bound)."""
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    from . import occ

    props = GProp_GProps()
    BRepGProp.SurfaceProperties_s(occ.raw(shape), props)
    return props.Mass()


def exact_massprops(web) -> MassProps:
    """The web's exact properties: body at the web density plus each plug at its own."""
    return sum(solid_massprops(shape, density) for _, shape, density in web.solids())


def step_massprops(path, densities) -> MassProps:
    """Properties of the solids re-read from a STEP file.

    densities : {solid name: g/cm^3}, a sequence in file order, or one
                number for every solid
    """
    from .export import read_step

    solids = read_step(path)
    if isinstance(densities, (int, float)):
        densities = [float(densities)] * len(solids)
    if isinstance(densities, dict):
        missing = [n for n, _ in solids if n not in densities]
        if missing:
            raise BadInput(f"{path}: no density given for solid {missing[0]!r}; "
                           f"named solids: {', '.join(n for n, _ in solids)}")
        dens = [densities[n] for n, _ in solids]
    else:
        dens = list(densities)
        if len(dens) != len(solids):
            raise BadInput(f"{path}: {len(solids)} solids but {len(dens)} densities given")
    return sum(solid_massprops(s, d) for (_, s), d in zip(solids, dens))


def _mesh_props(mesh, density_g_cm3: float) -> MassProps:
    # trimesh's inertia is about the centre of mass, products with the minus sign
    mesh.density = float(density_g_cm3) * 1e-3
    mp = mesh.mass_properties
    return MassProps.from_centroidal(mass=mp["mass"], com=mp["center_mass"],
                                     inertia_com=mp["inertia"], volume=mp["volume"])


def _load_volume(stl_path):
    import trimesh

    mesh = trimesh.load_mesh(str(stl_path), file_type="stl", process=True)
    if not mesh.is_volume:
        raise BadInput(f"{stl_path}: the mesh is not a closed volume (watertight={mesh.is_watertight}, "
                       f"winding consistent={mesh.is_winding_consistent}); its mass properties would be meaningless")
    return mesh


def mesh_massprops(stl_path, density_g_cm3: float) -> MassProps:
    """Properties of a closed STL mesh (mm) of uniform density, by trimesh.

    Refuses (BadInput) a mesh that is not a closed volume.
    """
    return _mesh_props(_load_volume(stl_path), density_g_cm3)


def mesh_plugs_from_file(plugs_stl, plugs) -> MassProps:
    """The plugs of a web from their STL file, by trimesh: each connected closed piece at the density of
    the plug (x, y, density) whose axis is nearest its centre of mass.  VerificationFailed when the file
    holds another number of pieces."""
    pieces = _load_volume(plugs_stl).split(only_watertight=True)
    if len(pieces) != len(plugs):
        raise VerificationFailed(f"{plugs_stl}: {len(pieces)} closed pieces for {len(plugs)} plugs")
    axes = np.array([[x, y] for x, y, _ in plugs])
    total = MassProps.zero()
    for piece in pieces:
        k = int(np.argmin(np.linalg.norm(axes - piece.center_mass[:2], axis=1)))
        total = total + _mesh_props(piece, plugs[k][2])
    return total


def mesh_web_from_files(stl, density_g_cm3: float, plugs_stl=None, plugs=()) -> MassProps:
    """A web from its STL files, by trimesh: the body at `density_g_cm3`, and each connected closed piece
    of `plugs_stl` at the density of the plug (x, y, density) whose axis it surrounds."""
    total = mesh_massprops(stl, density_g_cm3)
    if plugs:
        total = total + mesh_plugs_from_file(plugs_stl, plugs)
    return total


def mesh_web_massprops(web, paths: dict) -> MassProps:
    """The web from its exported meshes, re-read by trimesh (in the sidecar process when one is running,
    geomgen.sidecar, else here): the body STL at the web density, each plug at its own."""
    from . import sidecar

    plugs = [(web.features[p.index].x, web.features[p.index].y, p.density_g_cm3) for p in web.plugs]
    args = (str(paths["stl"]), float(web.density_g_cm3), str(paths["plugs_stl"]) if plugs else None, plugs)
    side = sidecar.active()
    if side is not None:
        answer = side.ask({"op": "mesh", "stl": args[0], "density": args[1], "plugs_stl": args[2],
                           "plugs": [list(p) for p in plugs]})
        if answer is not None:
            return sidecar.massprops_from_json(answer)
    return mesh_web_from_files(*args)


def _curved_faces(shape):
    """(area mm^2, largest distance from the Z axis mm) of each non-planar face."""
    from OCP.Bnd import Bnd_Box
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.BRepBndLib import BRepBndLib
    from OCP.GeomAbs import GeomAbs_Plane
    from OCP.TopAbs import TopAbs_FACE
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS

    from . import occ

    out = []
    explorer = TopExp_Explorer(occ.raw(shape), TopAbs_FACE)
    while explorer.More():
        face = TopoDS.Face_s(explorer.Current())
        explorer.Next()
        if BRepAdaptor_Surface(face).GetType() == GeomAbs_Plane:
            continue
        box = Bnd_Box()
        BRepBndLib.Add_s(face, box)
        x0, y0, _, x1, y1, _ = box.Get()
        r_max = max(math.hypot(x, y) for x in (x0, x1) for y in (y0, y1))
        out.append((surface_area(face), r_max))
    return out


def mesh_bound(web, *, tolerance: float) -> dict:
    """The largest mesh-vs-exact disagreement the chord tolerance allows.

    A planar face meshes into its own plane (the only difference is in-plane,
    of zero volume), so only curved faces count: |dV| <= delta * A_face for
    each, and each moment at most rho * delta * A_face times its largest
    lever arm (r for the unbalance, r^2 for the inertia about Z), summed over
    faces and solids.  `expected_mass_g` is the parabolic-segment estimate
    (2/3) * rho * delta * A_curved, for scale.

    tolerance : chord tolerance, mm.  Returns bounds on |dm| (g), |dU| (g*mm)
    and |d Iz| (g*mm^2).
    """
    dm = du = diz = 0.0
    for _, shape, density in web.solids():
        rho = density * 1e-3
        for area, r_max in _curved_faces(shape):
            dv = tolerance * area
            dm += rho * dv
            du += rho * dv * r_max
            diz += rho * dv * r_max ** 2
    return {"tolerance_mm": tolerance, "mass_g": dm, "unbalance_gmm": du, "inertia_z_gmm2": diz,
            "expected_mass_g": 2.0 / 3.0 * dm}


def _diff(a: MassProps, b: MassProps, *, length_mm: float) -> dict:
    du = float(np.linalg.norm(a.unbalance - b.unbalance))
    scale = max(b.unbalance_magnitude, abs(b.mass) * length_mm)
    return {
        "mass_rel": abs(a.mass - b.mass) / abs(b.mass),
        "mass_g": abs(a.mass - b.mass),
        "unbalance_gmm": du,
        "unbalance_rel": du / scale,
        "com_mm": float(np.linalg.norm(a.com - b.com)),
        "inertia_z_rel": abs(a.inertia_z - b.inertia_z) / abs(b.inertia_z),
        "inertia_z_gmm2": abs(a.inertia_z - b.inertia_z),
    }


def compare(predicted: MassProps, exact: MassProps, mesh: MassProps | None = None, *,
            bound: dict | None = None, name: str = "?",
            unbalance_rel: float = UNBALANCE_REL, length_mm: float = UNBALANCE_LENGTH_MM) -> dict:
    """The disagreements between the three figures of one web.

    Returns {"predicted_vs_exact": {...}, "mesh_vs_exact": {...}, "mesh_bound": bound,
    "largest_rel": float}.  Raises VerificationFailed (exit 4) with the
    figures when exact and predicted unbalance differ by more than
    `unbalance_rel` of max(|U_exact|, m * length_mm), or when the mesh is
    outside `bound`.
    """
    pe = _diff(predicted, exact, length_mm=length_mm)
    out = {"predicted_vs_exact": pe, "unbalance_scale_rule": f"max(|U_exact|, m * {length_mm:g} mm)",
           "unbalance_limit_rel": unbalance_rel}
    if pe["unbalance_rel"] > unbalance_rel:
        raise VerificationFailed(
            f"web {name}: exact and predicted unbalance differ by {pe['unbalance_gmm']:.4g} g*mm "
            f"({pe['unbalance_rel']:.3g} relative, limit {unbalance_rel:g}): exact "
            f"({exact.unbalance[0]:.4f}, {exact.unbalance[1]:.4f}), predicted "
            f"({predicted.unbalance[0]:.4f}, {predicted.unbalance[1]:.4f}) g*mm")
    largest = max(pe["mass_rel"], pe["unbalance_rel"], pe["inertia_z_rel"])
    if mesh is not None:
        me = _diff(mesh, exact, length_mm=length_mm)
        out["mesh_vs_exact"] = me
        if bound is not None:
            out["mesh_bound"] = bound
            for key in ("mass_g", "unbalance_gmm", "inertia_z_gmm2"):
                if me[key] > bound[key]:
                    raise VerificationFailed(
                        f"web {name}: mesh and exact {key} differ by {me[key]:.4g}, more than the "
                        f"{bound[key]:.4g} the {bound['tolerance_mm']:g} mm chord tolerance allows")
    out["largest_rel"] = largest
    return out


def verify_web(web, predicted: MassProps, paths: dict, *, tolerance: float) -> dict:
    """Exact, mesh and predicted figures of one exported web, compared.

    paths : as returned by geomgen.export.export_web;  tolerance : the STL
    chord tolerance used, mm.  Returns {"predicted", "exact", "mesh"} as
    MassProps summaries plus "comparison" (see `compare`).
    """
    exact = exact_massprops(web)
    mesh = mesh_web_massprops(web, paths)
    cmp = compare(predicted, exact, mesh, bound=mesh_bound(web, tolerance=tolerance), name=web.name)
    return {"predicted": predicted.summary(), "exact": exact.summary(), "mesh": mesh.summary(),
            "comparison": cmp, "exact_massprops": exact}
