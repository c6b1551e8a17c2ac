"""What a maker needs for each element of a design: pure functions, no I/O.

:func:`design_spec` turns a :class:`~springsynth.Design` and its stroke into one record
per element (a plain ``dict`` whose keys carry their units) plus the outline
:class:`Profile` of every flat part, from which :mod:`.outline` draws the DXF.

Every number that the models also use is taken from them: forces and the rate come from
:func:`~springsynth.evaluate_design` on the element alone, the end geometry of coil
springs follows the end type the kernel assumes, and the tolerances are the ones the
tolerance model (``springsynth tolerance``) samples.

Notes
-----
End types of compression springs (R.G. Budynas & J.K. Nisbett, *Shigley's Mechanical
Engineering Design*, 9th ed., Table 10-1), with d the wire diameter, Na the active and
Nt the total coils, p the pitch::

    ends               end coils  Nt      solid length Ls   free length L0
    plain              0          Na      d (Nt + 1)        p Na + d
    plain and ground   1          Na + 1  d Nt              p (Na + 1)
    closed             2          Na + 2  d (Nt + 1)        p Na + 3 d
    closed and ground  2          Na + 2  d Nt              p Na + 2 d

``helical_compression`` assumes closed-and-ground ends (Nt = Na + 2, Ls = d Nt), so the
spec states that end type; ``helical_extension`` has a full loop at each end and a
close-wound body of Nb = Na - G/E coils (Shigley ch. 10).

Mounting regions of flat parts (project choice, common practice): a clamp or mounting
block of length ``max(5 mm, 10 t)`` along the part and height ``max(5 mm, 10 t)``
across it at every clamped, guided or pinned end; a shop adapts them to its fixture.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from springsynth.assembly.design import Chain, Design, Element
from springsynth.assembly.evaluate import evaluate_design
from springsynth.checks.tolerance import SOURCES as TOLERANCE_SOURCES
from springsynth.checks.tolerance import material_class, param_tolerance
from springsynth.elements import get_kind, registry
from springsynth.model.errors import InputError
from springsynth.model.materials import Material

__all__ = [
    "Stroke", "PartRef", "Profile", "DesignSpec", "END_TYPES", "coil_ends", "parts", "design_spec",
    "mount_length", "columns", "RULES", "FLAT_KINDS", "SOLID_KINDS", "COIL_KINDS",
]

#: Shigley Table 10-1: end coils, extra wire diameters in the solid length, coils added to Na
#: in the free-length pitch term, wire diameters added to the free length
END_TYPES: dict[str, tuple[float, float, float, float]] = {
    "plain": (0.0, 1.0, 0.0, 1.0),
    "plain and ground": (1.0, 0.0, 1.0, 0.0),
    "closed": (2.0, 1.0, 0.0, 3.0),
    "closed and ground": (2.0, 0.0, 0.0, 2.0),
}
#: end type the helical_compression kernel assumes (Nt = Na + 2, Ls = d Nt)
COMPRESSION_ENDS = "closed and ground"
#: smallest clamp or mounting block, mm, and its size in thicknesses (project choice)
MOUNT_MIN_MM = 5.0
MOUNT_PER_THICKNESS = 10.0
#: coils of wire in each full-loop hook of an extension spring (as the kernel's mass)
HOOK_COILS = 1.0

SHIGLEY = "Budynas & Nisbett, Shigley's Mechanical Engineering Design, 9th ed."


@dataclass(frozen=True)
class Stroke:
    """Positions of the mechanism's stroke where the loads are stated, mm.

    ``installed_mm`` is where the mechanism sits when assembled (usually 0);
    ``working_mm`` the end of the working stroke, or None when not known.
    """

    installed_mm: float = 0.0
    working_mm: float | None = None

    def __post_init__(self):
        for name in ("installed_mm", "working_mm"):
            v = getattr(self, name)
            if v is not None and not (math.isfinite(v) and v >= 0):
                raise InputError(f"{name} must be a finite number of mm >= 0, got {v!r}", where="stroke")
        if self.working_mm is not None and self.working_mm < self.installed_mm:
            raise InputError(f"the working position {self.working_mm:g} mm lies before the installed position "
                             f"{self.installed_mm:g} mm; give --to larger than --from", where="stroke")

    @property
    def points_mm(self) -> tuple[float, ...]:
        return (self.installed_mm,) if self.working_mm is None else (self.installed_mm, self.working_mm)


@dataclass(frozen=True)
class PartRef:
    """One element of a design as the maker sees it.

    Attributes
    ----------
    label : str
        Short name used in file names and tables (``e1``).
    path : str
        Where it sits in the design file (``element 1``).
    element : Element
    material : Material
    deflection_mm : tuple of float
        The element's own deflection at each point of :attr:`Stroke.points_mm`.
    """

    label: str
    path: str
    element: Element
    material: Material
    deflection_mm: tuple[float, ...]


@dataclass(frozen=True)
class Profile:
    """What the outline of one flat part is drawn from (mm).

    ``shape`` is ``straight``, ``cosine`` (rise/2 (1 - cos 2 pi x/L)), ``half_sine``
    (rise sin(pi x/L)), ``wire`` (a straight round wire in side view), ``strip_blank``
    (a flat blank in plan view: ``thickness_mm`` is out of the drawing) or
    ``notch_stage``. ``length_mm`` is the flexing length between the mounting edges,
    ``mount_mm`` the mounting length at the start and the end (0: a free end) and
    ``block_mm`` the height of the mounting blocks across the part.
    """

    shape: str
    length_mm: float
    thickness_mm: float
    width_mm: float
    rise_mm: float = 0.0
    mount_mm: tuple[float, float] = (0.0, 0.0)
    block_mm: float = 0.0
    notch_radius_mm: float = 0.0


@dataclass(frozen=True)
class DesignSpec:
    """A design's specification: one record per element, the flat parts' profiles, warnings.

    Attributes
    ----------
    design : Design
    stroke : Stroke
    records : tuple of dict
        One per element, in design order; keys carry their units.
    profiles : dict of str -> Profile
        Outline of each flat part, keyed by its label.
    warnings : tuple of str
        Why the design is infeasible (empty when it is not); printed on every file.
    notes : tuple of str
        What the files leave out (e.g. no working position given).
    """

    design: Design
    stroke: Stroke
    records: tuple[dict[str, Any], ...]
    profiles: Mapping[str, Profile] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()

    @property
    def warning(self) -> str:
        """One line for every file, empty when the design is feasible."""
        if not self.warnings:
            return ""
        return (f"INFEASIBLE DESIGN {self.design.name}: " + "; ".join(self.warnings)
                + ". The models do not vouch for these parts; do not make them without re-checking.")


# --------------------------------------------------------------------------- walking a design

def parts(design: Design, stroke: Stroke) -> tuple[PartRef, ...]:
    """Every element of ``design`` (chain links included) with its own deflections along ``stroke``.

    This is the one place that walks a design's elements; everything else in the export
    iterates over its result. A branch of one element deflects ``max(x - offset, 0)``; a
    chain's link deflects as its chain's loading path shares the stroke between the links
    (the model's own strokes, :attr:`Response.element_stroke_mm`), and its quantity is
    the link's copies times the chain's.
    """
    for i, e in enumerate(design.parts, start=1):
        where = f"{design.name} element {i}"
        try:
            kind = get_kind(e.kind)
        except KeyError:
            raise InputError(f"unknown kind {e.kind!r}; one of {', '.join(registry())}", where=where) from None
        missing = [n for n in kind.param_names if n not in e.params]
        if missing:
            raise InputError(f"missing {', '.join(missing)}; {e.kind} needs {', '.join(kind.param_names)}", where=where)
        if e.material not in design.materials:
            raise InputError(f"material {e.material!r} is not resolved", where=where)
    x = np.asarray(stroke.points_mm, dtype=float)
    strokes = evaluate_design(design, x).element_stroke_mm[0] if design.has_chain else None
    out, chain_no = [], 0
    for i, ((b, k), e) in enumerate(zip(design.layout, design.parts), start=1):
        br = design.branches[b]
        if isinstance(br, Chain):
            chain_no += k == 0
            words = _position_words(br.offset_mm)
            path = f"chain {chain_no} ({words}), link {k + 1} of {len(br.links)} in series"
            out.append(PartRef(f"e{i}", path, dataclasses.replace(e, count=e.count * br.count),
                               design.materials[e.material], tuple(float(v) for v in strokes[i - 1])))
            continue
        defl = tuple(max(v - e.offset_mm, 0.0) for v in stroke.points_mm)
        out.append(PartRef(f"e{i}", f"element {i}", e, design.materials[e.material], defl))
    return tuple(out)


def _position_words(o: float) -> str:
    if o > 1e-9:
        return f"gap {o:.4g} mm: engages once the stroke passes {o:.4g} mm"
    if o < -1e-9:
        return f"preloaded by {-o:.4g} mm at the start of the stroke (x = 0)"
    return "engaged from the start of the stroke"


def mount_length(t: float) -> float:
    """Length (and height) of a clamp or mounting block, mm: ``max(5, 10 t)`` (project choice)."""
    return max(MOUNT_MIN_MM, MOUNT_PER_THICKNESS * t)


def coil_ends(ends: str, d: float, Na: float, L0: float) -> tuple[float, float, float]:
    """Total coils, solid length and pitch of a compression spring (Shigley Table 10-1).

    Parameters
    ----------
    ends : str
        One of :data:`END_TYPES`.
    d, Na, L0 : float
        Wire diameter (mm), active coils, free length (mm).

    Returns
    -------
    total_coils, solid_length_mm, pitch_mm : float
    """
    if ends not in END_TYPES:
        raise InputError(f"unknown end type {ends!r}; one of {', '.join(END_TYPES)}", where="ends")
    end_coils, solid_extra, pitch_coils, free_extra = END_TYPES[ends]
    Nt = Na + end_coils
    return Nt, d * (Nt + solid_extra), (L0 - free_extra * d) / (Na + pitch_coils)


# --------------------------------------------------------------------------- the model's numbers

def _copy_response(part: PartRef, u_mm, u_max_mm: float):
    """One copy of the element alone, no offset, evaluated by the model at its own deflections."""
    e = dataclasses.replace(part.element, count=1, offset_mm=0.0)
    d = Design((e,), {e.material: part.material}, name=part.label)
    return evaluate_design(d, np.asarray(u_mm, dtype=float), x_max_mm=u_max_mm)


def _loads(part: PartRef) -> dict[str, Any]:
    """Per-copy loads at the installed and working positions, peak stress ratio and validity."""
    u = part.deflection_mm
    r = _copy_response(part, u, max(u))
    rec: dict[str, Any] = {"deflection_installed_mm": u[0], "load_installed_N": float(r.force_N[0, 0])}
    if len(u) > 1:
        rec["deflection_working_mm"] = u[1]
        rec["load_working_N"] = float(r.force_N[0, 1])
    rec["stress_ratio_peak"] = float(r.stress_ratio[0])
    outside = {k: float(v[0]) for k, v in r.validity.items() if float(v[0]) > 0}
    if not r.finite[0]:
        outside["numerical"] = math.inf
    rec["model_validity"] = ("outside (" + ", ".join(f"{k} +{100 * v:.0f} %" for k, v in outside.items()) + ")"
                             if outside else "inside")
    rec["mass_g"] = float(r.mass_g[0])
    return rec


def _rate(part: PartRef) -> float:
    """Rate of one copy of a linear spring, N/mm, from the model's force at 1 and 2 mm."""
    r = _copy_response(part, [1.0, 2.0], 2.0)
    return float(r.force_N[0, 1] - r.force_N[0, 0])


def _tolerances(part: PartRef) -> dict[str, float]:
    """+- tolerance of each dimension as the tolerance model samples it (own units)."""
    cls = np.array([_material_class(part)])
    out = {}
    for q in get_kind(part.element.kind).params:
        if q.choices:
            continue
        v = float(part.element.params[q.name])
        tol = float(param_tolerance(q, np.array([v]), cls)[0])
        if tol > 0:
            out[q.name] = tol
    return out


def _tolerance_text(tols: Mapping[str, float]) -> str:
    return "; ".join(f"{k} ±{v:.3g}" for k, v in tols.items())


def _material_class(part: PartRef) -> int:
    """0 metal, 1 polymer, 2 elastomer (as the tolerance model classes the material)."""
    m = part.material
    return int(material_class(np.array([m.E_MPa]), np.array([m.hyperelastic]))[0])


def _grade(part: PartRef) -> str:
    """Where the tolerance model takes each of the part's tolerances from, by the classes its kind declares."""
    cls = _material_class(part)
    by_class = {"linear": ("machined", "moulded", "moulded_rubber")[cls],
                "width": ("slit_width", "moulded", "moulded_rubber")[cls],
                "strip": ("rolled_strip", "moulded", "moulded_rubber")[cls],
                "wire": "drawn_wire", "coiling": "coiling", "coils": "coiling", "tension": "initial_tension",
                "set_radius": "ribbon_radius"}
    keys = dict.fromkeys(by_class[q.tolerance] for q in get_kind(part.element.kind).params if q.tolerance in by_class)
    return "; ".join(TOLERANCE_SOURCES[k] for k in keys) + " (as `springsynth tolerance` samples them)"


# --------------------------------------------------------------------------- records per kind

def _head(design: Design, part: PartRef) -> dict[str, Any]:
    e = part.element
    pos = part.path if part.path.startswith("chain") else _position_words(e.offset_mm)
    copies = ", ".join(f"{part.label}-{k}" for k in range(1, e.count + 1))
    if e.count > 1:
        copies += " (identical copies side by side, in parallel)"
    return {"design": design.name, "part": part.label, "location": part.path, "kind": e.kind,
            "description": get_kind(e.kind).title, "quantity": e.count, "copies": copies, "position": pos,
            "material": e.material, "material_name": part.material.name}


def _helical_compression(part: PartRef) -> tuple[dict[str, Any], None]:
    p = part.element.params
    d, D, Na, L0 = (float(p[k]) for k in ("wire_diameter_mm", "mean_diameter_mm", "active_coils", "free_length_mm"))
    Nt, Ls, pitch = coil_ends(COMPRESSION_ENDS, d, Na, L0)
    k = _rate(part)
    loads = _loads(part)
    rec = {
        "wire_diameter_mm": d, "mean_diameter_mm": D, "outer_diameter_mm": D + d, "inner_diameter_mm": D - d,
        "spring_index": D / d, "active_coils": Na, "total_coils": Nt,
        "ends": f"{COMPRESSION_ENDS} (squared and ground) at both ends", "free_length_mm": L0,
        "solid_length_mm": Ls, "pitch_mm": pitch, "rate_N_per_mm": k,
        "installed_length_mm": L0 - loads["deflection_installed_mm"], "load_installed_N": loads["load_installed_N"],
    }
    if "load_working_N" in loads:
        rec.update(working_length_mm=L0 - loads["deflection_working_mm"], load_working_N=loads["load_working_N"])
    rec.update(
        travel_to_solid_mm=L0 - Ls, load_at_solid_N=k * (L0 - Ls), wire_length_mm=math.pi * D * Nt,
        winding="either hand (left to the maker)",
        seats="flat parallel seats (the buckling check assumes both ends on flat parallel plates)",
        presetting="not required: the allowable stress assumes set not removed (Shigley Table 10-6)",
        tolerance_grade=("quality grade 2 of EN 15800, which replaced DIN 2095 [memory]; the tolerance model's values: "
                         + _grade(part)),
    )
    rec.update({k2: v for k2, v in loads.items() if k2 not in rec})
    return rec, None


def _helical_extension(part: PartRef) -> tuple[dict[str, Any], None]:
    from springsynth.elements.helical_extension import free_length, initial_stress_range

    p = part.element.params
    d, D, Na, Fi = (float(p[k]) for k in ("wire_diameter_mm", "mean_diameter_mm", "active_coils", "initial_tension_N"))
    m = part.material
    Nb = Na - m.G_MPa / m.E_MPa
    L0 = float(free_length(d, D, Nb))
    tau_lo, tau_hi = (float(v) for v in initial_stress_range(D / d))
    loads = _loads(part)
    rec = {
        "wire_diameter_mm": d, "mean_diameter_mm": D, "outer_diameter_mm": D + d, "inner_diameter_mm": D - d,
        "spring_index": D / d, "active_coils": Na, "body_coils": Nb,
        "ends": f"full loop (machine loop) at both ends, in line with the body, loop inside diameter {D - d:.4g} mm",
        "free_length_mm": L0, "body_length_mm": d * (Nb + 1.0), "pitch_mm": d, "rate_N_per_mm": _rate(part),
        "initial_tension_N": Fi, "initial_tension_stress_MPa": 8.0 * Fi * D / (math.pi * d**3),
        "initial_tension_stress_range_MPa": f"{tau_lo:.4g} .. {tau_hi:.4g} (preferred range, Shigley ch. 10)",
        "installed_length_mm": L0 + loads["deflection_installed_mm"], "load_installed_N": loads["load_installed_N"],
    }
    if "load_working_N" in loads:
        rec.update(working_length_mm=L0 + loads["deflection_working_mm"], load_working_N=loads["load_working_N"])
    rec.update(
        wire_length_mm=math.pi * D * (Nb + 2.0 * HOOK_COILS), winding="either hand (left to the maker), close-wound",
        tolerance_grade=("quality grade 2 of DIN 2097 [memory] (EN 15800 covers compression springs only); the "
                         "tolerance model's values: " + _grade(part)),
    )
    rec.update({k2: v for k2, v in loads.items() if k2 not in rec})
    return rec, None


def _grain(part: PartRef) -> str:
    if "wire" in get_kind(part.element.kind).forms:
        return "drawn wire: its drawing direction runs along the length by itself"
    return ("rolling direction along the length, bend lines across the grain [common practice]",
            "no rolling grain; any extrusion or flow direction along the length [common practice]",
            "none (moulded elastomer)")[_material_class(part)]


_SUPPORTS = {
    "blade_guided": ("start clamped; end clamped to the guided shuttle, which moves across the blade without "
                     "rotating and is free along it"),
    "blade_cantilever": "start clamped; end free, loaded across the blade (load direction fixed)",
    "blade_clamped": "both ends clamped and held apart (axially fixed); load at mid-span",
    "wire_guided": "start clamped; end clamped to the guided shuttle (moves across without rotating)",
    "arch": "both ends clamped and axially fixed; mid-span joined to the guided shuttle (no rotation there)",
}


def _flat(part: PartRef, prof: Profile, supports: str, shape: str, extra: Mapping[str, Any] = ()) -> dict[str, Any]:
    """Record of a flat part drawn from ``prof``."""
    rec: dict[str, Any] = {"length_mm": prof.length_mm, "width_mm": prof.width_mm, "thickness_mm": prof.thickness_mm}
    if prof.rise_mm or part.element.kind in ("arch", "column"):
        rec["rise_mm"] = prof.rise_mm
    if prof.notch_radius_mm:
        rec["notch_radius_mm"] = prof.notch_radius_mm
    rec.update(shape=shape, supports=supports, clamp_length_start_mm=prof.mount_mm[0],
               clamp_length_end_mm=prof.mount_mm[1], block_height_mm=prof.block_mm,
               overall_length_mm=prof.length_mm + sum(prof.mount_mm))
    rec.update(extra)
    rec["grain"] = _grain(part)
    rec.update(_loads(part))
    rec["tolerance_grade"] = _grade(part)
    return rec


def _beam(part: PartRef) -> tuple[dict[str, Any], Profile]:
    p = part.element.params
    kind = part.element.kind
    L, b, t = float(p["length_mm"]), float(p["width_mm"]), float(p["thickness_mm"])
    c = mount_length(t)
    prof = Profile("straight", L, t, b, mount_mm=(c, 0.0 if kind == "blade_cantilever" else c), block_mm=c)
    cut = {"cut_from": (f"strip {t:g} mm thick as a blank {L + sum(prof.mount_mm):.4g} x {b:g} mm, clamped in blocks; "
                        f"or in one piece with its blocks from plate {b:g} mm thick (DXF outline)")}
    return _flat(part, prof, _SUPPORTS[kind], "straight", cut), prof


def _wire(part: PartRef) -> tuple[dict[str, Any], Profile]:
    p = part.element.params
    L, d = float(p["length_mm"]), float(p["wire_diameter_mm"])
    c = mount_length(d)
    prof = Profile("wire", L, d, d, mount_mm=(c, c), block_mm=d)
    rec = _flat(part, prof, _SUPPORTS["wire_guided"], "straight round wire",
                {"wire_diameter_mm": d, "cut_from": f"straightened spring wire {d:g} mm, cut to {L + 2 * c:.4g} mm"})
    for k in ("width_mm", "thickness_mm", "block_height_mm"):
        del rec[k]
    return rec, prof


def _arch(part: PartRef) -> tuple[dict[str, Any], Profile]:
    p = part.element.params
    L, b, t, h = (float(p[k]) for k in ("length_mm", "width_mm", "thickness_mm", "rise_mm"))
    c = mount_length(t)
    prof = Profile("cosine", L, t, b, rise_mm=h, mount_mm=(c, c), block_mm=c)
    cut = {"cut_from": f"plate {b:g} mm thick, curved as made (stress-free), outline in the DXF"}
    return _flat(part, prof, _SUPPORTS["arch"], "cosine arch y = rise/2 (1 - cos 2 pi x/L)", cut), prof


def _column(part: PartRef) -> tuple[dict[str, Any], Profile]:
    p = part.element.params
    L, b, t, h = (float(p[k]) for k in ("length_mm", "width_mm", "thickness_mm", "rise_mm"))
    ends = str(p["ends"])
    c = mount_length(t)
    if h <= 0:
        shape, form = "straight", "straight"
    elif ends == "pinned":
        shape, form = "half_sine", "half-sine y = rise sin(pi x/L)"
    else:
        shape, form = "cosine", "y = rise/2 (1 - cos 2 pi x/L)"
    prof = Profile(shape, L, t, b, rise_mm=h, mount_mm=(c, c), block_mm=c)
    sup = ("both ends pinned: the mounting blocks must turn freely about the column's ends (knife edge or pivot); "
           if ends == "pinned" else "both ends clamped; ") + "load along the chord"
    cut = {"cut_from": (f"plate {b:g} mm thick, shaped as made (stress-free), outline in the DXF"
                        if h > 0 else f"strip {t:g} mm thick, or plate {b:g} mm thick (DXF outline)")}
    return _flat(part, prof, sup, form, cut), prof


def _ribbon(part: PartRef) -> tuple[dict[str, Any], Profile]:
    from springsynth.elements import ribbon as rb

    p = part.element.params
    b, t, Rn = (float(p[k]) for k in ("width_mm", "thickness_mm", "natural_radius_mm"))
    Dd = float(rb.drum_diameter(Rn))
    known = len(part.deflection_mm) > 1
    u_max = max(part.deflection_mm) if known else rb.RAMP_DRUM_DIAMETERS * Dd
    strip = float(rb.Ribbon.strip_length({"natural_radius_mm": np.array([Rn])}, np.array([u_max]))[0])
    c = mount_length(t)
    prof = Profile("strip_blank", strip, t, b, mount_mm=(0.0, c), block_mm=0.0)
    extra = {"natural_radius_mm": Rn, "drum_diameter_mm": Dd, "strip_length_mm": strip,
             "plateau_force_N": float(rb.plateau_force(part.material.E_MPa, b, t, Rn)),
             "cut_from": (f"strip {t:g} mm thick, blank {strip + c:.4g} x {b:g} mm, coiled and heat-set to the "
                          f"natural radius; {rb.DEAD_WRAPS:g} wraps stay on the drum at full stroke"
                          + ("" if known else " (no working stroke given: the length covers the ramp only)"))}
    sup = f"coiled on a drum {Dd:.4g} mm in diameter, free on it; outer end fixed to the moving part"
    rec = _flat(part, prof, sup, "flat strip, coiled to the natural radius", extra)
    rec.pop("block_height_mm")
    return rec, prof


def _notch_stage(part: PartRef) -> tuple[dict[str, Any], Profile]:
    p = part.element.params
    L, b, t, r = (float(p[k]) for k in ("length_mm", "width_mm", "thickness_mm", "notch_radius_mm"))
    c = mount_length(t + 2.0 * r)
    prof = Profile("notch_stage", L, t, b, mount_mm=(c, c), block_mm=c, notch_radius_mm=r)
    extra = {"cut_from": f"plate {b:g} mm thick in one piece (wire EDM or laser), outline in the DXF"}
    sup = ("base fixed; the stage is guided by two links with a circular notch hinge at each of the four corners; "
           "length = distance between hinge centres, thickness = neck")
    return _flat(part, prof, sup, "parallelogram with right-circular notch hinges", extra), prof


def _sphere(part: PartRef) -> tuple[dict[str, Any], None]:
    R = float(part.element.params["radius_mm"])
    rec = {"radius_mm": R, "diameter_mm": 2.0 * R,
           "counterface": "flat of the same material and hardness, ground or lapped",
           "surfaces": "smooth; the model is frictionless and elastic (Hertz), no plastic seating",
           "grade": "ball grade to the shop's choice (e.g. a precision ball); the model only sees the radius"}
    rec.update(_loads(part))
    rec["tolerance_grade"] = _grade(part)
    return rec, None


def _pad(part: PartRef) -> tuple[dict[str, Any], None]:
    p = part.element.params
    L, W, t = (float(p[k]) for k in ("length_mm", "width_mm", "thickness_mm"))
    rec = {"length_mm": L, "width_mm": W, "thickness_mm": t, "shape_factor": L * W / (2.0 * t * (L + W)),
           "bonding": f"both loaded faces ({L:g} x {W:g} mm) bonded to rigid plates over their whole area",
           "clearance": "keep the four free sides clear: the rubber bulges out between the plates",
           "hardness": "as the material name states; the model uses the material's own law"}
    rec.update(_loads(part))
    rec["tolerance_grade"] = _grade(part)
    return rec, None


#: what each kind becomes; kinds with a flat part return its outline profile
RULES: dict[str, Callable[[PartRef], tuple[dict[str, Any], Profile | None]]] = {
    "helical_compression": _helical_compression, "helical_extension": _helical_extension,
    "blade_guided": _beam, "blade_cantilever": _beam, "blade_clamped": _beam, "wire_guided": _wire,
    "arch": _arch, "column": _column, "ribbon": _ribbon, "notch_parallelogram": _notch_stage,
    "contact_sphere": _sphere, "elastomer_pad": _pad,
}
COIL_KINDS = ("helical_compression", "helical_extension")
SOLID_KINDS = ("contact_sphere", "elastomer_pad")
FLAT_KINDS = tuple(k for k in RULES if k not in COIL_KINDS + SOLID_KINDS)


def _generic(part: PartRef) -> tuple[dict[str, Any], None]:
    rec = dict(part.element.params)
    rec.update(_loads(part))
    rec["notes"] = f"no maker's rules for kind {part.element.kind!r} in this version: its parameters only"
    return rec, None


# --------------------------------------------------------------------------- the design

def design_spec(design: Design, stroke: Stroke, *, stress_limit: float = 1.0,
                extra_warnings: tuple[str, ...] = ()) -> DesignSpec:
    """Specification of every element of ``design`` over ``stroke``.

    Parameters
    ----------
    design : Design
    stroke : Stroke
        Installed and working positions of the mechanism, mm.
    stress_limit : float
        Largest stress / allowable counted as feasible (1: the allowable itself; a run
        passes its study's ``limits.stress_ratio``).
    extra_warnings : tuple of str
        Further reasons the design is infeasible (e.g. the run's envelope or limits).

    Returns
    -------
    DesignSpec
    """
    records, profiles, warnings = [], {}, list(extra_warnings)
    for part in parts(design, stroke):
        rec, prof = RULES.get(part.element.kind, _generic)(part)
        full = _head(design, part) | rec
        full["tolerances"] = _tolerance_text(_tolerances(part))
        if prof is not None:
            profiles[part.label] = prof
            full["dxf"] = f"{part.label}-{part.element.kind}.dxf"
        if full["model_validity"] != "inside":
            why = full["model_validity"].removeprefix("outside")
            warnings.append(f"{part.label} outside its model's valid range{why}")
        if not full["stress_ratio_peak"] <= stress_limit:
            warnings.append(f"{part.label} stress ratio {full['stress_ratio_peak']:.3g} above {stress_limit:g}")
        records.append(full)
    notes = ()
    if stroke.working_mm is None:
        notes = (("no working position given: loads there are left out and each model's range was checked at the "
                  "installed position only; give the stroke (--to X) for both"),)
    warning = DesignSpec(design, stroke, (), warnings=tuple(warnings)).warning
    for rec in records:
        rec["warning"] = warning
    return DesignSpec(design, stroke, tuple(records), profiles, tuple(warnings), notes)


#: columns that close every row of spec.csv, in this order
TAIL = ("stress_ratio_peak", "model_validity", "mass_g", "tolerances", "tolerance_grade", "dxf", "notes", "warning")


def columns(records) -> list[str]:
    """Union of the records' keys (the CSV header): first-seen order, :data:`TAIL` last."""
    seen: dict[str, None] = {}
    for r in records:
        seen.update(dict.fromkeys(k for k in r if k not in TAIL))
    return list(seen) + [k for k in TAIL if any(k in r for r in records)]
