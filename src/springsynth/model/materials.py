"""Material records, the sourced catalogue, inline materials and their population arrays.

Every hyperelastic law is stored as an equivalent incompressible Ogden series
``W = sum_p mu_p/alpha_p (l1^a_p + l2^a_p + l3^a_p - 3)`` so that element kernels
evaluate one vectorised expression whatever law the designer chose:

* neo-Hookean ``W = mu/2 (I1 - 3)``            -> mu_1 = mu,     alpha_1 = 2
* Mooney-Rivlin ``W = C10 (I1-3) + C01 (I2-3)`` -> mu = (2 C10, -2 C01), alpha = (2, -2)
* Ogden (Ogden 1972, Proc. R. Soc. Lond. A 326:565)  -> as given

Linear-elastic materials have an empty series.
"""

from __future__ import annotations

import csv
import dataclasses
import math
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from typing import Any, Mapping, Sequence

import numpy as np

from springsynth.model.errors import InputError

__all__ = [
    "Material",
    "MaterialArrays",
    "catalogue",
    "material_from_mapping",
    "FORMS",
    "LAWS",
    "N_OGDEN",
    "DEFAULT_STRAIN_LIMIT",
]

#: stands for an unknown (NaN) property when materials are compared
_NAN = ("nan",)

#: Product forms a material is supplied in; each element kind names the forms it needs.
FORMS = ("wire", "strip", "bulk", "elastomer")
LAWS = ("linear", "neo_hookean", "mooney_rivlin", "ogden")
#: Ogden terms held per material (zero-padded).
N_OGDEN = 3
#: range of ``fatigue_cycles``: the S-N line of the fatigue check starts at 1e3 cycles
FATIGUE_CYCLES_MIN, FATIGUE_CYCLES_MAX = 1e3, 1e12

#: strain_limit of an inline hyperelastic material that gives none: the nominal strain to which
#: each law's form is usually trusted for rubber, capped at 1.0, the value every catalogue
#: elastomer carries. neo-Hookean 0.5: the Gaussian-network (neo-Hookean) form follows simple
#: extension of rubber to a stretch of about 1.5 and then departs from it (L.R.G. Treloar, The
#: Physics of Rubber Elasticity, 3rd ed., Oxford 1975, ch. 5 and 10 [memory]; common practice);
#: Mooney-Rivlin 1.0: the Mooney plot of simple extension is straight to a stretch of about 2
#: (Treloar 1975 ch. 10; R.S. Rivlin & D.W. Saunders, Phil. Trans. R. Soc. A 243:251, 1951
#: [memory]); Ogden 1.0: the three-term law follows Treloar's data to a stretch of about 7
#: (R.W. Ogden, Proc. R. Soc. Lond. A 326:565, 1972), capped at the catalogue's 1.0 [common
#: practice: elastomer springs work far below their break strain].
DEFAULT_STRAIN_LIMIT = {"neo_hookean": 0.5, "mooney_rivlin": 1.0, "ogden": 1.0}


@dataclass(frozen=True, eq=False)
class Material:
    """One material, validated when built. Stresses and moduli in MPa.

    Attributes
    ----------
    id : str
        Identifier used in designs and studies (``stainless_17_7ph``).
    E_MPa, G_MPa, nu : float
        Small-strain Young's modulus, shear modulus, Poisson's ratio.
    density_kg_m3 : float
    yield_MPa : float
        Yield (or 0.2 % proof) strength; for elastomers the allowable nominal stress.
    uts_MPa : float
        Tensile strength (used when no wire-size law is given).
    fatigue_MPa : float
        Fatigue strength in fully reversed bending or axial load at ``fatigue_cycles`` (NaN when
        unknown): the material's own figure, read by the fatigue check under a duty.
    fatigue_cycles : float
        Cycles at which ``fatigue_MPa`` (or ``fatigue_strain``) is stated (default 1e7).
    zimmerli : bool
        A steel spring wire to which Zimmerli's torsional endurance data apply (Shigley ch. 10:
        independent of size, material and strength for spring steels under 10 mm).
    fatigue_strain : float
        Elastomers: the largest nominal strain of a cycle from zero survived for ``fatigue_cycles``
        (NaN when unknown).
    sut_A_MPa, sut_m : float
        Wire tensile strength ``S_ut = A / d^m`` (d in mm); NaN when not a spring wire.
    torsion_share : float
        Static torsional allowable as a share of the tensile strength (coil springs).
    forms : tuple of str
        Product forms (see ``FORMS``); decides which element kinds it suits.
    law : str
        ``linear`` or a hyperelastic law (see ``LAWS``).
    ogden_mu_MPa, ogden_alpha : tuple of float
        The law as an equivalent Ogden series (empty for ``linear``).
    strain_limit : float
        Largest nominal strain the law is trusted to (elastomers), NaN otherwise.
    source : str
    notices : tuple of str
        What the reader filled in for the user (e.g. a default strain limit); not part of
        the material's identity.

    Notes
    -----
    Two materials are equal when every property is, with unknown values (NaN) equal to
    each other, so a material equals its own copy read back from a checkpoint.
    """

    id: str
    name: str
    E_MPa: float
    G_MPa: float
    nu: float
    density_kg_m3: float
    yield_MPa: float
    uts_MPa: float
    fatigue_MPa: float = math.nan
    fatigue_cycles: float = 1e7
    zimmerli: bool = False
    fatigue_strain: float = math.nan
    sut_A_MPa: float = math.nan
    sut_m: float = math.nan
    torsion_share: float = math.nan
    forms: tuple[str, ...] = ("strip",)
    law: str = "linear"
    ogden_mu_MPa: tuple[float, ...] = ()
    ogden_alpha: tuple[float, ...] = ()
    strain_limit: float = math.nan
    source: str = ""
    notices: tuple[str, ...] = field(default=(), compare=False, repr=False)

    def _identity(self) -> tuple:
        """The compared fields, NaN replaced by a marker that equals itself (NaN != NaN); computed once."""
        ident = self.__dict__.get("_identity_")
        if ident is None:
            ident = tuple(_NAN if isinstance(v, float) and math.isnan(v) else v
                          for v in (getattr(self, name) for name in _COMPARED))
            object.__setattr__(self, "_identity_", ident)
        return ident

    def __getstate__(self) -> dict:
        return {k: v for k, v in self.__dict__.items() if k != "_identity_"}

    def __eq__(self, other: object) -> bool:
        if other.__class__ is not self.__class__:
            return NotImplemented
        return self._identity() == other._identity()

    def __hash__(self) -> int:
        return hash(self._identity())

    def __post_init__(self):
        where = f"material {self.id!r}"
        for name in ("E_MPa", "G_MPa", "density_kg_m3", "yield_MPa", "uts_MPa"):
            v = getattr(self, name)
            if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
                raise InputError(f"{name} must be a positive number, got {v!r}", where=where)
        if not (-1.0 < self.nu < 0.5):
            raise InputError(f"nu must lie in (-1, 0.5), got {self.nu!r}", where=where)
        bad = [f for f in self.forms if f not in FORMS]
        if bad or not self.forms:
            raise InputError(f"forms must be some of {', '.join(FORMS)}, got {' '.join(self.forms)!r}", where=where)
        if self.law not in LAWS:
            raise InputError(f"law must be one of {', '.join(LAWS)}, got {self.law!r}", where=where)
        if self.law != "linear":
            if not self.ogden_mu_MPa or len(self.ogden_mu_MPa) != len(self.ogden_alpha) or len(self.ogden_mu_MPa) > N_OGDEN:
                raise InputError(f"the {self.law} law needs 1 to {N_OGDEN} (mu, alpha) terms", where=where)
            mu0 = self.initial_shear_MPa
            if not mu0 > 0:
                raise InputError(f"the {self.law} constants give a non-positive initial shear modulus {mu0:.4g} MPa", where=where)
            if not (math.isfinite(self.strain_limit) and self.strain_limit > 0):
                raise InputError(f"strain_limit must be a positive number for a hyperelastic law, got {self.strain_limit!r}", where=where)
        self._check_fatigue(where)
        if not math.isnan(self.torsion_share) and not (0 < self.torsion_share < 1):
            raise InputError(f"torsion_share must lie in (0, 1), got {self.torsion_share!r}", where=where)

    def _check_fatigue(self, where: str) -> None:
        for name in ("fatigue_MPa", "fatigue_strain"):
            v = getattr(self, name)
            if not (isinstance(v, (int, float)) and (math.isnan(v) or (math.isfinite(v) and v > 0))):
                raise InputError(f"{name} must be a positive number, got {v!r}", where=where)
        c = self.fatigue_cycles
        if not (isinstance(c, (int, float)) and math.isfinite(c) and FATIGUE_CYCLES_MIN <= c <= FATIGUE_CYCLES_MAX):
            raise InputError(f"fatigue_cycles must be a number from {FATIGUE_CYCLES_MIN:.0e} to "
                             f"{FATIGUE_CYCLES_MAX:.0e}, got {c!r}", where=where)
        if not isinstance(self.zimmerli, bool):
            raise InputError(f"zimmerli must be true or false, got {self.zimmerli!r}", where=where)

    @property
    def initial_shear_MPa(self) -> float:
        """Small-strain shear modulus of the hyperelastic law, ``mu = sum(mu_p alpha_p)/2``."""
        return 0.5 * sum(m * a for m, a in zip(self.ogden_mu_MPa, self.ogden_alpha))

    @property
    def hyperelastic(self) -> bool:
        return self.law != "linear"

    def suits(self, forms: Sequence[str]) -> bool:
        """Whether the material comes in any of ``forms``."""
        return any(f in self.forms for f in forms)


#: the fields that make a material's identity (all but ``notices``)
_COMPARED = tuple(f.name for f in dataclasses.fields(Material) if f.compare)


# --------------------------------------------------------------------------- laws

def _ogden_from_law(law: str, c: Mapping[str, Any], where: str) -> tuple[tuple[float, ...], tuple[float, ...]]:
    def num(key):
        if key not in c:
            raise InputError(f"the {law} law needs {key}", where=where)
        return _number(c[key], f"{where}.{key}")

    if law == "linear":
        return (), ()
    if law == "neo_hookean":
        return (num("mu_MPa"),), (2.0,)
    if law == "mooney_rivlin":
        return (2.0 * num("C10_MPa"), -2.0 * num("C01_MPa")), (2.0, -2.0)
    if law == "ogden":
        mu, al = c.get("mu_MPa"), c.get("alpha")
        if not isinstance(mu, (list, tuple)) or not isinstance(al, (list, tuple)):
            raise InputError("the ogden law needs lists mu_MPa = [...] and alpha = [...]", where=where)
        if len(mu) != len(al):
            raise InputError(f"mu_MPa has {len(mu)} terms but alpha has {len(al)}", where=where)
        alpha = tuple(_number(v, f"{where}.alpha") for v in al)
        if 0.0 in alpha:
            raise InputError(f"alpha exponents must be non-zero, got {list(al)!r}", where=where)
        return tuple(_number(v, f"{where}.mu_MPa") for v in mu), alpha
    raise InputError(f"unknown law {law!r}; use one of {', '.join(LAWS)}", where=where)


def _number(v: Any, where: str) -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise InputError(f"must be a number, got {v!r}", where=where)
    try:
        v = float(v)
    except OverflowError:  # an integer beyond the float range
        v = math.inf
    if not math.isfinite(v):
        raise InputError(f"must be finite, got {v!r}", where=where)
    return v


_INLINE_KEYS = {
    "name", "E_MPa", "G_MPa", "nu", "density_kg_m3", "yield_MPa", "uts_MPa", "fatigue_MPa", "fatigue_cycles",
    "zimmerli", "fatigue_strain",
    "sut_A_MPa", "sut_m", "torsion_share", "forms", "law", "mu_MPa", "C10_MPa", "C01_MPa",
    "alpha", "strain_limit", "source",
}


def material_from_mapping(mid: str, d: Mapping[str, Any], *, where: str) -> Material:
    """Build a material from an inline ``[materials.<id>]`` table of a design or study.

    Linear-elastic entries need ``E_MPa``, ``density_kg_m3`` and ``yield_MPa``; ``G_MPa``
    defaults to ``E/(2(1+nu))`` and ``nu`` to 0.3. Hyperelastic entries give ``law``
    and its constants; E and G then follow from the initial shear modulus, and a missing
    ``strain_limit`` takes the law's :data:`DEFAULT_STRAIN_LIMIT`, said in ``Material.notices``.
    """
    from springsynth.model.suggest import unknown_key_message

    where = f"{where} [materials.{mid}]"
    if not isinstance(d, Mapping):
        raise InputError("must be a table of properties", where=where)
    for k in d:
        if k not in _INLINE_KEYS:
            raise InputError(unknown_key_message(k, _INLINE_KEYS), where=where)
    law = d.get("law", "linear")
    if not isinstance(law, str):
        raise InputError(f"law must be a string, got {law!r}", where=where)
    mu, alpha = _ogden_from_law(law, d, where)
    get = lambda k, default=math.nan: _number(d[k], f"{where}.{k}") if k in d else default  # noqa: E731
    notices: list[str] = []
    density = get("density_kg_m3")
    if math.isnan(density):
        raise InputError("density_kg_m3 is required", where=where)
    forms = d.get("forms")
    if law == "linear":
        E = get("E_MPa")
        if math.isnan(E):
            raise InputError("E_MPa is required for a linear-elastic material", where=where)
        nu = get("nu", 0.3)
        if not -1.0 < nu < 0.5:
            raise InputError(f"nu must lie in (-1, 0.5), got {nu!r}", where=where)
        G = get("G_MPa", E / (2 * (1 + nu)))
        yld = get("yield_MPa")
        if math.isnan(yld):
            raise InputError("yield_MPa is required for a linear-elastic material", where=where)
        uts = get("uts_MPa", yld)
        forms = forms or ["wire", "strip", "bulk"]
        strain_limit = get("strain_limit")
    else:
        mu0 = 0.5 * sum(m * a for m, a in zip(mu, alpha))
        if not mu0 > 0:
            raise InputError(f"the {law} constants give a non-positive initial shear modulus {mu0:.4g} MPa "
                             "(mu = sum(mu_p alpha_p)/2 must be > 0)", where=where)
        nu = get("nu", 0.499)
        G = mu0
        E = 2 * mu0 * (1 + nu)
        strain_limit = get("strain_limit", DEFAULT_STRAIN_LIMIT[law])
        if "strain_limit" not in d:
            notices.append(f"{where}: no strain_limit given; using {strain_limit:g}, the nominal strain to which "
                           f"the {law} law is usually trusted (common practice); set strain_limit to your "
                           "material's own limit")
        yld = get("yield_MPa", E * strain_limit)
        uts = get("uts_MPa", yld)
        forms = forms or ["elastomer"]
    if isinstance(forms, str):
        forms = forms.split()
    if not isinstance(forms, (list, tuple)) or not all(isinstance(f, str) for f in forms):
        raise InputError(f"forms must be a list of strings, got {forms!r}", where=where)
    try:
        return Material(
            id=mid, name=str(d.get("name", mid)), E_MPa=E, G_MPa=G, nu=nu, density_kg_m3=density,
            yield_MPa=yld, uts_MPa=uts, fatigue_MPa=get("fatigue_MPa"), fatigue_cycles=get("fatigue_cycles", 1e7),
            zimmerli=d.get("zimmerli", False), fatigue_strain=get("fatigue_strain"), sut_A_MPa=get("sut_A_MPa"),
            sut_m=get("sut_m"), torsion_share=get("torsion_share"), forms=tuple(forms), law=law,
            ogden_mu_MPa=mu, ogden_alpha=alpha, strain_limit=strain_limit,
            source=str(d.get("source", "defined inline by the user")), notices=tuple(notices),
        )
    except InputError as e:  # name the file and table, not only the material id
        raise InputError(str(e).removeprefix(f"material {mid!r}: "), where=where) from None


# --------------------------------------------------------------------------- catalogue

_CSV = "materials.csv"


def _parse_constants(text: str, law: str) -> dict[str, Any]:
    """``"mu_MPa=0.6178 0.001177 -0.009807; alpha=1.3 5 -2"`` -> dict.

    Values are lists for the Ogden law and scalars for the others.
    """
    out: dict[str, Any] = {}
    for part in filter(None, (p.strip() for p in text.split(";"))):
        key, _, vals = part.partition("=")
        nums = [float(v) for v in vals.split()]
        out[key.strip()] = nums if law == "ogden" else nums[0]
    return out


@lru_cache(maxsize=1)
def catalogue() -> dict[str, Material]:
    """The shipped catalogue (``springsynth/data/materials.csv``), keyed by id."""
    text = resources.files("springsynth").joinpath("data").joinpath(_CSV).read_text(encoding="utf-8")
    rows = list(csv.DictReader(line for line in text.splitlines() if not line.startswith("#")))
    out: dict[str, Material] = {}
    f = lambda r, k: float(r[k]) if r.get(k, "").strip() else math.nan  # noqa: E731
    for r in rows:
        law = r["law"].strip() or "linear"
        mu, alpha = _ogden_from_law(law, _parse_constants(r.get("law_constants", ""), law), f"{_CSV} row {r['id']}")
        out[r["id"]] = Material(
            id=r["id"], name=r["name"], E_MPa=f(r, "E_MPa"), G_MPa=f(r, "G_MPa"), nu=f(r, "nu"),
            density_kg_m3=f(r, "density_kg_m3"), yield_MPa=f(r, "yield_MPa"), uts_MPa=f(r, "uts_MPa"),
            fatigue_MPa=f(r, "fatigue_MPa"), fatigue_cycles=f(r, "fatigue_cycles") if r.get("fatigue_cycles", "").strip()
            else 1e7, zimmerli=r.get("zimmerli", "").strip() == "yes", fatigue_strain=f(r, "fatigue_strain"),
            sut_A_MPa=f(r, "sut_A_MPa"), sut_m=f(r, "sut_m"),
            torsion_share=f(r, "torsion_share"), forms=tuple(r["forms"].split()), law=law,
            ogden_mu_MPa=mu, ogden_alpha=alpha, strain_limit=f(r, "strain_limit"), source=r["source"],
        )
    return out


# --------------------------------------------------------------------------- arrays

@dataclass(frozen=True)
class MaterialArrays:
    """Material properties gathered per design, each of shape (n,) (Ogden terms (n, 3)).

    Element kernels read these instead of ``Material`` objects so that one call
    evaluates a whole population whose members use different materials.
    """

    E: np.ndarray
    G: np.ndarray
    nu: np.ndarray
    rho: np.ndarray          # kg/m^3
    yield_: np.ndarray
    uts: np.ndarray
    fatigue: np.ndarray
    fatigue_cycles: np.ndarray
    zimmerli: np.ndarray      # bool
    fatigue_strain: np.ndarray
    sut_A: np.ndarray
    sut_m: np.ndarray
    torsion_share: np.ndarray
    strain_limit: np.ndarray
    hyperelastic: np.ndarray  # bool
    ogden_mu: np.ndarray      # (n, N_OGDEN), zero-padded
    ogden_alpha: np.ndarray   # (n, N_OGDEN), padded with 1 (harmless where mu = 0)

    @classmethod
    def take(cls, materials: Sequence[Material], index: np.ndarray) -> "MaterialArrays":
        """Gather properties of ``materials[index]``; ``index`` shape (n,)."""
        return _table(tuple(materials)).take(np.asarray(index, dtype=np.intp))

    @classmethod
    def table(cls, materials: Sequence[Material]) -> "MaterialArrays":
        """Properties of every one of ``materials``, row i for ``materials[i]`` (cached: read, never write)."""
        return _table(tuple(materials)).full

    @classmethod
    def of(cls, material: Material, n: int = 1) -> "MaterialArrays":
        return cls.take([material], np.zeros(n, dtype=np.intp))

    def subset(self, rows: np.ndarray) -> "MaterialArrays":
        return MaterialArrays(**{f.name: getattr(self, f.name)[rows] for f in dataclasses.fields(self)})

    def replace(self, **changes) -> "MaterialArrays":
        return dataclasses.replace(self, **changes)

    def rows(self, index: np.ndarray) -> "MaterialArrays":
        """Like :meth:`subset`, but each field is gathered only when a kernel first reads it
        (kernels read a few of the seventeen fields; the assembly calls this per kind)."""
        return _GatheredRows(self, np.asarray(index, dtype=np.intp))  # type: ignore[return-value]


class _GatheredRows:
    """Rows of a :class:`MaterialArrays`, gathered field by field on first access."""

    def __init__(self, source: MaterialArrays, index: np.ndarray):
        self.__dict__["_source"] = source
        self.__dict__["_index"] = index

    def __getattr__(self, name: str) -> np.ndarray:
        value = getattr(self._source, name)[self._index]
        self.__dict__[name] = value
        return value

    def __setattr__(self, name, value):
        raise dataclasses.FrozenInstanceError(f"cannot assign to field {name!r}")

    def subset(self, rows: np.ndarray) -> MaterialArrays:
        return self._source.subset(self._index[rows])

    def rows(self, rows: np.ndarray) -> "_GatheredRows":
        return _GatheredRows(self._source, self._index[np.asarray(rows, dtype=np.intp)])

    def replace(self, **changes) -> MaterialArrays:
        return self._source.subset(self._index).replace(**changes)


class _Table:
    def __init__(self, mats: tuple[Material, ...]):
        mu = np.zeros((len(mats), N_OGDEN))
        al = np.ones((len(mats), N_OGDEN))
        for i, m in enumerate(mats):
            mu[i, : len(m.ogden_mu_MPa)] = m.ogden_mu_MPa
            al[i, : len(m.ogden_alpha)] = m.ogden_alpha
        col = lambda a: np.array([getattr(m, a) for m in mats], dtype=float)  # noqa: E731
        self.full = MaterialArrays(
            E=col("E_MPa"), G=col("G_MPa"), nu=col("nu"), rho=col("density_kg_m3"),
            yield_=col("yield_MPa"), uts=col("uts_MPa"), fatigue=col("fatigue_MPa"),
            fatigue_cycles=col("fatigue_cycles"), zimmerli=np.array([m.zimmerli for m in mats], dtype=bool),
            fatigue_strain=col("fatigue_strain"),
            sut_A=col("sut_A_MPa"), sut_m=col("sut_m"), torsion_share=col("torsion_share"),
            strain_limit=col("strain_limit"),
            hyperelastic=np.array([m.hyperelastic for m in mats], dtype=bool),
            ogden_mu=mu, ogden_alpha=al,
        )

    def take(self, index: np.ndarray) -> MaterialArrays:
        return self.full.subset(index)


@lru_cache(maxsize=64)
def _table(mats: tuple[Material, ...]) -> _Table:
    return _Table(mats)
