"""Independent verification: re-solve each element of a design with a high-fidelity method.

The analytic kernels (:mod:`springsynth.elements`) are fast fits and closed forms. This
module re-solves every element with a method that shares no formula, fit or table
with its kernel, and reports how far the two disagree over the stroke.

Independent method per kind (``ElementKind.verification`` names it; :mod:`.solvers` runs it)
------------------------------------------------------------------------------------------
========================  =====================================================================
kind                      independent solution (see the ``_solve_*`` functions)
========================  =====================================================================
blade_cantilever          planar inextensible elastica as a boundary-value problem
                          (``scipy.integrate.solve_bvp``), displacement continuation: y' = sin th,
                          th' = m, m' = -alpha cos th; th(0) = 0, m(1) = 0, y(1) = u/L
blade_guided, wire_guided the same elastica over the *whole* blade with a guided far end
                          (th(1) = 0, no axial force) - no use of the half-cantilever symmetry
blade_clamped             extensible (Reissner) elastica of the half span, ends clamped and
                          axially fixed, symmetric at mid-span; stretching from N = EA eps
arch                      the same rod with the cosine natural shape, mid-span guided
                          (no rotation), displacement control through the snap-through; at
                          every step the (1 - cos 4 pi x/L)/2 mode is tried as a perturbation
                          and the least-energy solution kept (branch switching onto the
                          bifurcated path); slow: tens of seconds per arch
column                    extensible elastica of the half span with the initial shape as natural
                          curvature (half-sine pinned, (1 - cos)/2 clamped), load along the
                          chord, displacement (end-shortening) control; the straight column
                          below its bifurcation is the exact axial solution
helical_compression       Castigliano: strain energy of torsion, bending, direct shear (Cowper
                          shear factor) and axial force integrated numerically along the
                          actual helix (pitch from the free length, updated as the coils close)
helical_extension         the same for the close-wound body plus two half-loop hooks in
                          in-plane bending; hook stress from Winkler curved-bar theory with the
                          neutral axis found by quadrature over the circular section
contact_sphere            Hertz pressure distribution p0 sqrt(1 - r^2/a^2): surface displacement
                          from the Boussinesq ring kernel integrated numerically, a and p0 from
                          the rigid-approach and profile conditions, force by quadrature
ribbon                    beam-theory energy of the prestressed strip unrolled from its drum
                          (drum radius 1.15 R_n, as the kind mounts it), quadrature through the
                          thickness: F = E I / 2 (2/(R_n R_d) - 1/R_d^2). The handbook factor
                          26.4 of the kernel is empirical; pure beam theory with R_d = R_n gives
                          24, so the two differ by design (about 8 %). Only the plateau
                          (u >= the kernel's ramp) is compared; the ramp is a modelling choice
                          without an independent solution
elastomer_pad             continuum finite elements (felupe, a general-purpose non-linear FE
                          library): one eighth of the bonded block, tri-quadratic hexahedra
                          with a mixed u-p-J nearly-incompressible formulation, the material's
                          own Ogden series, faces bonded to rigid plates, displacement control
notch_parallelogram       plane-stress finite elements of one circular notch hinge (felupe,
                          9-node quadrilaterals on a mapped mesh following the cut-outs) under a
                          pure moment; the stage force from its stiffness with the pin-jointed
                          parallelogram kinematics (:mod:`.notch`)
========================  =====================================================================

Any other kind is reported as "not verified: no independent solver for <kind>".

Chains: each link is re-solved by its kind's solver on its own stroke table (the strokes
the assembly tabulates it on, up to its reach or, where no link of the chain has a falling
branch, up to 1.25 times the largest stroke the kernel's loading path gives it: a link is
not asked for travel the chain never gives it) and at the strokes the kernel's loading
path gives it; the chain's verified force is then the series composition of the links'
independent curves by the same loading-path construction as the kernels'
(:func:`springsynth.assembly.chains.series_path`), snaps included. A link is compared on
its own strokes along the path; the chain on the design's stroke (a ``chain`` row).

Deviation measures (per element, per copy; and for the assembly):

    force_dev_pct  = 100 max_x |F_verified - F_kernel| / max_x |F_kernel|
    stress_dev_pct = 100 max_x |s_verified - s_kernel| / max_x |s_kernel|

with s the kind's governing stress; for the assembly the stress measure is the
stress ratio (stress / allowable, largest over the elements). A deviation above
``THRESHOLD_PCT`` (3 %) is flagged.

Expensive solvers (the rods, the finite elements) are run at no more than a few
stroke nodes per element and interpolated (cubic spline in u, through the origin)
onto many stroke points; with up to ``DIRECT_POINTS`` points they are solved at
every point.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from springsynth.assembly.chains import continued, follow, series_path, table_strokes, unit_grid
from springsynth.assembly.design import Chain, Design, Element
from springsynth.assembly.evaluate import evaluate_design
from springsynth.checks.verify.coils import helical_rate_castigliano
from springsynth.checks.verify.elastica import solve_half_span, solve_tip_loaded_beam
from springsynth.checks.verify.hertz import hertz_force_numeric
from springsynth.checks.verify.pad_fe import pad_force_fe, pad_force_reference
from springsynth.checks.verify.ribbon import ribbon_plateau_beam
from springsynth.checks.verify.solvers import SOLVERS, NotVerified, kernel_curves, solver_for
from springsynth.elements import get_kind
from springsynth.model.errors import InputError
from springsynth.model.materials import Material
from springsynth.model.numbers import pct_text

__all__ = ["VerificationReport", "ElementCheck", "ChainCheck", "verify_design", "verified_forces", "verified_error_pct",
           "THRESHOLD_PCT", "solve_tip_loaded_beam", "solve_half_span", "helical_rate_castigliano",
           "hertz_force_numeric", "ribbon_plateau_beam", "pad_force_fe", "pad_force_reference", "SOLVERS"]

#: deviations above this, percent, are flagged
THRESHOLD_PCT = 3.0


# =========================================================================== report

@dataclass(frozen=True)
class ElementCheck:
    """Verification of one element (per copy, on its own stroke u = x - offset).

    Attributes
    ----------
    index : int
        1-based position in the design.
    kind, material : str
    verified : bool
        False when no independent solver covers the kind (see ``note``).
    method, note : str
    force_dev_pct, stress_dev_pct : float
        Largest deviation over the stroke, % of the kernel's largest |value| (NaN when not
        compared).
    flagged : bool
        A deviation above the threshold.
    force_kernel_N, force_verified_N : ndarray, shape (m,)
        Force of all copies on the design's stroke points (verified: the kernel's value
        where no independent value exists).
    stress_ratio_kernel, stress_ratio_verified : ndarray, shape (m,)
        Governing stress / allowable (verified: NaN where not compared).
    """

    index: int
    kind: str
    material: str
    verified: bool
    method: str
    note: str
    force_dev_pct: float
    stress_dev_pct: float
    flagged: bool
    force_kernel_N: np.ndarray = field(repr=False)
    force_verified_N: np.ndarray = field(repr=False)
    stress_ratio_kernel: np.ndarray = field(repr=False)
    stress_ratio_verified: np.ndarray = field(repr=False)


@dataclass(frozen=True)
class ChainCheck:
    """Verification of one chain: its force composed from the links' independent curves.

    Attributes
    ----------
    index : int
        1-based number of the chain in the design.
    first : int
        1-based element number of its first link (the links follow in order).
    links : int
    force_kernel_N, force_verified_N : ndarray, shape (m,)
        Force of all copies of the chain on the design's stroke points.
    force_dev_pct : float
    snap_kernel_mm, snap_verified_mm : float
        Stroke of the first snap (NaN when none).
    flagged : bool
    """

    index: int
    first: int
    links: int
    force_kernel_N: np.ndarray = field(repr=False)
    force_verified_N: np.ndarray = field(repr=False)
    force_dev_pct: float
    snap_kernel_mm: float
    snap_verified_mm: float
    flagged: bool


@dataclass(frozen=True)
class VerificationReport:
    """Result of :func:`verify_design`.

    Attributes
    ----------
    design : str
    x_mm : ndarray, shape (m,)
    elements : tuple of ElementCheck
    force_kernel_N, force_verified_N : ndarray, shape (m,)
        Total force of the mechanism.
    assembly_force_dev_pct : float
        ``100 max|F_ver - F_kernel| / max|F_kernel|`` of the total force (NaN when no element
        was compared, or the force is zero throughout).
    assembly_stress_dev_pct : float
        Relative difference (%) of the peak stress ratio over elements and stroke (NaN when no
        element's stress was compared).
    threshold_pct : float
    """

    design: str
    x_mm: np.ndarray
    elements: tuple[ElementCheck, ...]
    force_kernel_N: np.ndarray
    force_verified_N: np.ndarray
    assembly_force_dev_pct: float
    assembly_stress_dev_pct: float
    threshold_pct: float = THRESHOLD_PCT
    chains: tuple[ChainCheck, ...] = ()

    @property
    def flags(self) -> tuple[str, ...]:
        """Readable warnings: deviations above the threshold and unverified elements."""
        out = []
        for e in self.elements:
            if not e.verified:
                out.append(f"{self.design} element {e.index} ({e.kind}): {e.note}")
            elif e.flagged:
                out.append(f"{self.design} element {e.index} ({e.kind}): force {_pct(e.force_dev_pct)}, "
                           f"stress {_pct(e.stress_dev_pct)} from the independent solution"
                           + (f" ({e.note})" if e.note else ""))
        for c in self.chains:
            if c.flagged:
                out.append(f"{self.design} chain {c.index} (elements {c.first}-{c.first + c.links - 1}): force "
                           f"{_pct(c.force_dev_pct)} from the composition of the links' independent curves")
        if self.assembly_force_dev_pct > self.threshold_pct or self.assembly_stress_dev_pct > self.threshold_pct:
            out.append(f"{self.design} assembly: force {_pct(self.assembly_force_dev_pct)}, "
                       f"peak stress ratio {_pct(self.assembly_stress_dev_pct)}")
        return tuple(out)

    def to_frame(self):
        """One row per element plus one ``assembly`` row (pandas DataFrame)."""
        import pandas as pd

        rows = [{"design_id": self.design, "element": str(e.index), "kind": e.kind, "material": e.material,
                 "verified": e.verified, "force_dev_pct": e.force_dev_pct, "stress_dev_pct": e.stress_dev_pct,
                 "flagged": e.flagged, "method": e.method, "note": e.note} for e in self.elements]
        rows += [{"design_id": self.design, "element": f"chain {c.index}", "kind": "chain", "material": "",
                  "verified": all(e.verified for e in self.elements[c.first - 1:c.first - 1 + c.links]),
                  "force_dev_pct": c.force_dev_pct, "stress_dev_pct": math.nan, "flagged": c.flagged,
                  "method": f"series composition of elements {c.first}-{c.first + c.links - 1}", "note": ""}
                 for c in self.chains]
        rows.append({"design_id": self.design, "element": "assembly", "kind": "", "material": "",
                     "verified": all(e.verified for e in self.elements) and math.isfinite(self.assembly_force_dev_pct),
                     "force_dev_pct": self.assembly_force_dev_pct, "stress_dev_pct": self.assembly_stress_dev_pct,
                     "flagged": self.assembly_force_dev_pct > self.threshold_pct
                     or self.assembly_stress_dev_pct > self.threshold_pct,
                     "method": "sum of the elements", "note": ""})
        return pd.DataFrame(rows)


def _pct(v: float) -> str:
    return pct_text(v)


def _dev(ver: np.ndarray, ker: np.ndarray, mask: np.ndarray) -> float:
    scale = float(np.max(np.abs(ker))) if ker.size else 0.0
    if not mask.any() or scale <= 0:
        return math.nan
    return 100.0 * float(np.max(np.abs(ver[mask] - ker[mask]))) / scale


def _check_element(i: int, e: Element, mat: Material, x: np.ndarray, *, stress: bool = True) -> ElementCheck:
    kind = get_kind(e.kind)
    vals = e.values()
    raw = {q.name: (e.params[q.name] if q.choices else vals[q.name]) for q in kind.params}
    u = np.maximum(x - e.offset_mm, 0.0)
    engaged = x - e.offset_mm > 0
    fk, sk, allow = kernel_curves(kind, vals, mat, u)
    fk = np.where(engaged, fk, 0.0) * e.count
    srk = np.where(engaged, sk / allow, 0.0)
    solver = solver_for(e.kind)
    nan = np.full(x.size, np.nan)
    if not engaged.any():
        return ElementCheck(i, e.kind, e.material, False, "",
                            f"not compared: it never engages within the stroke (gap {e.offset_mm:g} mm, stroke up "
                            f"to {float(x.max()):g} mm)", math.nan, math.nan, False, fk, fk.copy(), srk, nan)
    if solver is None:
        return ElementCheck(i, e.kind, e.material, False, "", f"not verified: no independent solver for {e.kind}",
                            math.nan, math.nan, False, fk, fk.copy(), srk, nan)
    try:
        solved = solver(e.kind, raw, mat, np.where(engaged, u, 0.0))
    except NotVerified as exc:
        return ElementCheck(i, e.kind, e.material, False, "", f"not verified: {exc}", math.nan, math.nan, False,
                            fk, fk.copy(), srk, nan)
    except RuntimeError as exc:
        return ElementCheck(i, e.kind, e.material, False, "",
                            f"not verified: the independent solver did not converge ({exc})", math.nan, math.nan,
                            False, fk, fk.copy(), srk, nan)
    compared = engaged if solved.compared is None else (solved.compared & engaged)
    fv = np.where(compared, np.nan_to_num(solved.force) * e.count, fk)
    fv = np.where(engaged, fv, 0.0)
    force_dev = _dev(fv, fk, compared)
    if solved.stress is not None:
        srv = np.where(engaged, solved.stress / allow, 0.0)
        stress_dev = _dev(srv, srk, engaged)
    else:
        srv, stress_dev = nan, math.nan
    flagged = any(math.isfinite(v) and v > THRESHOLD_PCT for v in (force_dev, stress_dev))
    return ElementCheck(i, e.kind, e.material, True, solved.method, solved.note, force_dev, stress_dev, flagged,
                        fk, fv, srk, srv)


#: a chain link's table for its independent solver: at most DIRECT_POINTS strokes, so each is solved
_LINK_TABLE = unit_grid(14, geometric=4)
#: where no link falls, a link is solved up to this multiple of the largest stroke the kernel's path gives it
#: (room for an independent curve up to a fifth softer); beyond, its table is continued as in the kernel
_PATH_MARGIN = 1.25


def _link_solution(e: Element, mat: Material, u: np.ndarray):
    """Kernel and independent force (all copies) and stress ratio of a chain link at its own strokes ``u``
    (increasing, at most ``DIRECT_POINTS`` of them, so that the solver solves at every one).

    Returns ``(fk, fv, srk, srv, compared, verified, method, note)``; where no independent
    solution exists the kernel's force stands in for it (``verified`` False, the reason in ``note``).
    """
    kind = get_kind(e.kind)
    vals = e.values()
    raw = {q.name: (e.params[q.name] if q.choices else vals[q.name]) for q in kind.params}
    fk, sk, allow = kernel_curves(kind, vals, mat, u)
    fk, srk = fk * e.count, sk / allow
    solver = solver_for(e.kind)
    note = f"not verified: no independent solver for {e.kind}"
    if solver is not None:
        try:
            solved = solver(e.kind, raw, mat, u)
        except NotVerified as exc:
            note = f"not verified: {exc}"
        except RuntimeError as exc:
            note = f"not verified: the independent solver did not converge ({exc})"
        else:
            compared = np.ones(u.size, bool) if solved.compared is None else solved.compared
            fv = np.where(compared, np.nan_to_num(solved.force) * e.count, fk)
            srv = solved.stress / allow if solved.stress is not None else np.full(u.size, np.nan)
            return fk, fv, srk, srv, compared, True, solved.method, solved.note
    return fk, fk.copy(), srk, np.full(u.size, np.nan), np.zeros(u.size, bool), False, "", note


def _check_link(index: int, e: Element, mat: Material, grid: np.ndarray, path_u: np.ndarray):
    """A chain link on its own strokes: solved on ``grid``, compared there up to its largest stroke on the
    kernel's path; its curves along the path (``path_u`` at the design's stroke points) for the report."""
    fk, fv, srk, srv, compared, verified, method, note = _link_solution(e, mat, grid)
    used = compared & (grid <= max(float(np.max(path_u)), grid[1]))
    fdev = _dev(fv, fk, used) if verified else math.nan
    sdev = _dev(np.nan_to_num(srv), srk, used) if verified and np.isfinite(srv).any() else math.nan
    flagged = any(math.isfinite(v) and v > THRESHOLD_PCT for v in (fdev, sdev))
    fk_x, sk_x, allow = kernel_curves(get_kind(e.kind), e.values(), mat, path_u)
    on = path_u > 0
    fv_x = np.interp(path_u, grid, fv) * on
    srv_x = np.where(on, np.interp(path_u, grid, srv), np.nan) if np.isfinite(srv).all() else np.full(path_u.size, np.nan)
    check = ElementCheck(index, e.kind, e.material, verified, method, note, fdev, sdev, flagged,
                         fk_x * e.count * on, fv_x, sk_x / allow * on, srv_x)
    return check, fv


def _check_chain(first: int, index: int, chain: Chain, mats, x: np.ndarray):
    """Element checks of a chain's links and the chain's check (see the module notes)."""
    kernel = evaluate_design(Design((chain,), {e.material: mats[e.material] for e in chain.links}, name="chain"), x)
    top = max(float(np.max(x)) - chain.offset_mm, 1e-9)
    params = [{q: np.array([v]) for q, v in e.values().items()} for e in chain.links]
    k_max = max(get_kind(e.kind).stroke_marks(p).shape[1] for e, p in zip(chain.links, params))
    falls = [not get_kind(e.kind).monotonic_force for e in chain.links]
    u_tab, F_tab, checks = [], [], []
    for k, (e, p) in enumerate(zip(chain.links, params)):
        kind = get_kind(e.kind)
        reach = np.maximum(np.minimum(np.array([top]), kind.stroke_reach(p)), 1e-9)
        if not any(falls):      # monotone links: the path takes each only as far as the chain's end force
            reach = np.minimum(reach, max(_PATH_MARGIN * float(np.max(kernel.element_stroke_mm[0, k])), 1e-6))
        grid = table_strokes(reach, kind.stroke_marks(p), k_max, _LINK_TABLE)[0]
        check, fv = _check_link(first + k, e, mats[e.material], grid, kernel.element_stroke_mm[0, k])
        checks.append(check)
        ut, Ft = continued(grid[None, :], fv[None, :], np.array([max(top, reach[0]) * (1 + 1e-6) + 1e-9]))
        u_tab.append(ut)
        F_tab.append(Ft)
    path = series_path(np.stack(u_tab), np.stack(F_tab), np.array([falls.index(True) if any(falls) else -1]))
    u = x - chain.offset_mm
    order = np.argsort(u, kind="stable")
    fv_chain = np.empty(x.size)
    fv_chain[order] = follow(path, u[order][None, :], links=None)[0][0] * chain.count
    fk_chain = kernel.force_N[0]
    dev = _dev(fv_chain, fk_chain, u > 0)
    cc = ChainCheck(index, first, len(chain.links), fk_chain, fv_chain, dev if math.isfinite(dev) else 0.0,
                    float(kernel.snap_mm[0]), chain.offset_mm + float(path.snap_mm[0]),
                    math.isfinite(dev) and dev > THRESHOLD_PCT)
    return checks, cc


def verify_design(design: Design, x_mm: np.ndarray) -> VerificationReport:
    """Re-solve every element of ``design`` independently at the stroke points ``x_mm``.

    Parameters
    ----------
    design : Design
    x_mm : ndarray, shape (m,)
        Stroke points of the mechanism, mm, >= 0 (a moderate number, e.g. 9, keeps it fast).

    Returns
    -------
    VerificationReport
    """
    x = np.asarray(x_mm, dtype=float).ravel()
    if x.size < 2 or not np.all(np.isfinite(x)) or np.any(x < 0):
        raise InputError("stroke points must be at least two finite displacements >= 0 mm", where=design.name)
    checks: list[ElementCheck] = []
    chains: list[ChainCheck] = []
    fk = np.zeros(x.size)
    fv = np.zeros(x.size)
    for b in design.branches:
        if isinstance(b, Chain):
            links, cc = _check_chain(len(checks) + 1, len(chains) + 1, b, design.materials, x)
            checks += links
            chains.append(cc)
            fk, fv = fk + cc.force_kernel_N, fv + cc.force_verified_N
        else:
            checks.append(_check_element(len(checks) + 1, b, design.materials[b.material], x))
            fk, fv = fk + checks[-1].force_kernel_N, fv + checks[-1].force_verified_N
    # the assembly is compared only where some element was: otherwise kernel against itself reads "0 %"
    dev = _dev(fv, fk, np.ones(x.size, bool)) if any(c.verified for c in checks) else math.nan
    srk = max(float(np.max(c.stress_ratio_kernel)) for c in checks)
    srv_each = [np.where(np.isfinite(c.stress_ratio_verified), c.stress_ratio_verified, c.stress_ratio_kernel)
                for c in checks]
    srv = max(float(np.max(s)) for s in srv_each)
    stress_compared = any(np.isfinite(c.stress_ratio_verified).any() for c in checks)
    sdev = 100.0 * abs(srv - srk) / srk if srk > 0 and stress_compared else math.nan
    return VerificationReport(design.name, x, tuple(checks), fk, fv, dev, sdev, chains=tuple(chains))


def verified_forces(design: Design, x_mm: np.ndarray) -> np.ndarray:
    """Total force of ``design`` at ``x_mm`` from the independent solvers, N, shape (m,).

    Elements (or stroke ranges) without an independent solution contribute their kernel force.
    """
    return verify_design(design, x_mm).force_verified_N


def verified_error_pct(design: Design, target) -> float:
    """Curve error (``100 RMS_w(F - F_target) / max|F_target|``, %, as :meth:`Target.curve_error_pct`) with the
    verification solver's forces.

    Parameters
    ----------
    design : Design
    target : Target

    Returns
    -------
    float
    """
    F = verified_forces(design, target.x_mm)
    return float(target.curve_error_pct(F[None, :])[0])
