"""Water activity of an arbitrary major-ion composition through PHREEQC with pitzer.dat (optional extra ``ions``).

PHREEQC is run once per composition over a grid of salinity (the composition scaled by a concentration factor, as a
brine concentrates with its ion ratios fixed) and temperature; the osmotic coefficient is tabulated and interpolated.
The Gibbs energy follows from Gibbs-Duhem by integrating mu_w / S^2 (module notes below), so least work with a salty
product stays exact within the table.

Notes
-----
With mu_w = -(R T / M) S phi / (1 - S) [J/kg water] (M the mean molar mass of the solute particles), the specific Gibbs
energy per kg solution consistent with it is g(S) = (R T / M) S ln S - S I(S), where
I(S) = integral_0^S delta(s) / s^2 ds and delta = mu_w + R T s / M. With s = u^2 the integrand is
2 (R T / M) (1 - phi/(1 - u^2)) / u, finite at u = 0, and the integral is taken by the trapezoid rule on a fine grid.

No phase is allowed to precipitate: above a mineral's saturation the result is that of a supersaturated solution.
Charge balance is not forced; a composition whose imbalance exceeds :data:`CHARGE_IMBALANCE_LIMIT` is refused where
the scenario is read (:func:`check_charge_balance`). Saturation indices of the concentrate are tabulated in
:mod:`compare.thermo.scaling`.

Water activity comes from PHREEQC's ``ACT("H2O")`` in a USER_PUNCH block (``Solution.activity('H2O')`` of phreeqpython
does not return the water activity).

References
----------
Parkhurst, D. L. and Appelo, C. A. J. (2013), Description of input and examples for PHREEQC version 3, USGS Techniques
and Methods 6-A43. Appelo, C. A. J. (2015), Appl. Geochem. 55, 62-71 (pitzer.dat).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from .model import ActivityModel, ModelError, Validity
from .constants import M_W, R, T0_C

#: ions accepted: molar mass [kg/mol] of the species as written, charge counted in the balance, and the PHREEQC
#: master species it enters as (pitzer.dat SOLUTION_MASTER_SPECIES; None: not in pitzer.dat). Carbonate and
#: bicarbonate both enter as total inorganic carbon C(4), which PHREEQC speciates at the given pH; boron (as B) and
#: silica (as SiO2) are uncharged at natural pH. pitzer.dat has no fluorine: F counts in the salinity and the charge
#: balance only.
IONS = {
    "Na": (0.0229898, 1, "Na"), "K": (0.0390983, 1, "K"), "Mg": (0.024305, 2, "Mg"), "Ca": (0.04008, 2, "Ca"),
    "Sr": (0.08762, 2, "Sr"), "Ba": (0.13733, 2, "Ba"), "Li": (0.006941, 1, "Li"),
    "Cl": (0.035453, -1, "Cl"), "Br": (0.079904, -1, "Br"), "F": (0.0189984, -1, None),
    "SO4": (0.096062, -2, "S(6)"), "HCO3": (0.0610168, -1, "C(4)"), "CO3": (0.0600089, -2, "C(4)"),
    "B": (0.01081, 0, "B"), "SiO2": (0.0600843, 0, "Si"),
}
#: ions whose input needs a pH (carbonate speciation)
NEEDS_PH = ("HCO3", "CO3")
S_GRID_MAX = 0.30
T_GRID = T0_C + np.arange(0.0, 101.0, 10.0)
#: practice: the usual acceptance of a water analysis, cations and anions within 5 % of their sum (from memory:
#: Standard Methods for the Examination of Water and Wastewater, section 1030 E, for anion sums above 10 meq/L)
CHARGE_IMBALANCE_LIMIT = 0.05


@dataclass(frozen=True)
class Composition:
    """A natural water given by its major ions: mass fractions [kg/kg of solution] and pH (measured at
    ``temperature`` [K]). Frozen and hashable, so tables built from it are cached per composition.
    """

    ions: tuple            # ((ion, mass fraction [kg/kg]), ...) sorted by ion
    ph: float | None = None
    temperature: float = 298.15

    @classmethod
    def of(cls, fractions: dict, ph: float | None = None, temperature: float = 298.15) -> "Composition":
        _check_names(fractions)
        return cls(tuple(sorted((k, float(v)) for k, v in fractions.items() if v > 0)), ph, float(temperature))

    @property
    def fractions(self) -> dict[str, float]:
        return dict(self.ions)

    @property
    def salinity(self) -> float:
        """Total of the ions as a mass fraction [kg/kg]."""
        return float(sum(v for _, v in self.ions))

    def molalities(self) -> dict[str, float]:
        """Each ion's molality [mol/kg of water]."""
        water = 1.0 - self.salinity
        return {k: v / (IONS[k][0] * water) for k, v in self.ions}

    def equivalents(self) -> tuple[float, float]:
        """Cation and anion sums [eq/kg of solution], both positive."""
        eq = [v / IONS[k][0] * IONS[k][1] for k, v in self.ions]
        return sum(e for e in eq if e > 0), -sum(e for e in eq if e < 0)

    @property
    def charge_imbalance(self) -> float:
        """(cations - anions) / (cations + anions) in equivalents [-]."""
        cat, an = self.equivalents()
        return (cat - an) / (cat + an) if cat + an > 0 else 0.0


def available() -> bool:
    """True when phreeqpython (and its bundled PHREEQC) can be imported."""
    try:
        import phreeqpython  # noqa: F401
    except Exception:
        return False
    return True


#: what a user without the optional extra is told when an ion composition needs PHREEQC
MISSING = ("an ion composition (feed.water = \"ions\") needs PHREEQC: install the optional extra 'ions' "
           "(pip install '.[ions]'; phreeqpython, x86-64 Linux); salinity-only feeds (seawater, nacl) work without it")


def _phreeqc():
    try:
        from phreeqpython import PhreeqPython
    except Exception as exc:  # pragma: no cover - depends on the platform
        raise ModelError(f"{MISSING} ({type(exc).__name__}: {exc})") from None
    return PhreeqPython(database="pitzer.dat").ip


def _check_names(composition: dict) -> None:
    bad = [k for k in composition if k not in IONS]
    if bad:
        raise ModelError(f"feed.ions: expected ions among {', '.join(IONS)}, got {', '.join(bad)}")


def as_composition(composition) -> Composition:
    """A :class:`Composition` from itself or from a dict ion -> mass fraction (any scale)."""
    return composition if isinstance(composition, Composition) else Composition.of(composition)


def check_charge_balance(composition: Composition, limit: float = CHARGE_IMBALANCE_LIMIT) -> str | None:
    """The reason a composition's charge balance is refused (cations and anions differ by more than ``limit`` of
    their sum), naming both sums; None when it is within the limit."""
    cat, an = composition.equivalents()
    if cat + an <= 0:
        return "expected at least one charged ion, got none"
    imb = composition.charge_imbalance
    if abs(imb) > limit:
        return (f"expected cations and anions to balance within {limit:.0%} of their sum, got cations "
                f"{cat * 1e3:.4g} meq/kg and anions {an * 1e3:.4g} meq/kg (imbalance {imb:+.1%})")
    return None


def check_total(composition: Composition, salinity: float, tolerance: float) -> str | None:
    """The reason a composition's total is refused (it differs from the given ``salinity`` [kg/kg] by more than
    ``tolerance`` of it), naming both figures; None when they agree."""
    total = composition.salinity
    if abs(total - salinity) > tolerance * salinity:
        return (f"expected the ions to total the feed salinity within {tolerance:.0%}, got ions totalling "
                f"{total * 1e3:.4g} g/kg against feed.salinity {salinity * 1e3:.4g} g/kg")
    return None


def _normalise(composition) -> dict[str, float]:
    fractions = composition.fractions if isinstance(composition, Composition) else dict(composition)
    _check_names(fractions)
    total = sum(fractions.values())
    if total <= 0:
        raise ModelError("feed.ions: expected at least one ion with a positive concentration")
    return {k: v / total for k, v in fractions.items() if v > 0}


def phreeqc_input(molalities: dict[str, float]) -> list[str]:
    """SOLUTION lines (mol/kgw) for ion molalities: species of one master species summed (C(4) from HCO3 and CO3);
    ions pitzer.dat does not know (F) are left out."""
    master: dict[str, float] = {}
    for ion, m in molalities.items():
        key = IONS[ion][2]
        if key is not None and m > 0:
            master[key] = master.get(key, 0.0) + m
    return [f" {k} {m:.10e}" for k, m in master.items()]


def particle_molar_mass(composition: dict[str, float]) -> float:
    """Mean molar mass of the solute particles [kg/mol] of a composition (ion -> mass fraction, any scale)."""
    shares = _normalise(composition)
    return 1.0 / sum(w / IONS[k][0] for k, w in shares.items())


def _run(shares: dict[str, float], S, T, ph: float | None = None):
    """a_w from PHREEQC for each (S, T) pair."""
    ip = _phreeqc()
    blocks = []
    for i, (s, t) in enumerate(zip(S, T)):
        lines = [f"SOLUTION {i + 1}", f" temp {t - T0_C:.6f}", " units mol/kgw"] + ([f" pH {ph:.4f}"] if ph else [])
        lines += phreeqc_input({ion: w * s / ((1 - s) * IONS[ion][0]) for ion, w in shares.items()})
        blocks.append("\n".join(lines))
    text = "\n".join(blocks) + "\nSELECTED_OUTPUT\n -reset false\nUSER_PUNCH\n -headings aw\n 10 PUNCH ACT(\"H2O\")\nEND\n"
    ip.run_string(text)
    rows = ip.get_selected_output_array()
    return np.array([r[0] for r in rows[1:]], dtype=float)


def phreeqc_model(composition) -> ActivityModel:
    """An :class:`ActivityModel` for the major-ion composition ``composition`` (a :class:`Composition`, or a dict
    ion -> mass fraction at any scale); built once per composition and kept (PHREEQC runs once for its table)."""
    return _model(as_composition(composition))


@functools.lru_cache(maxsize=8)
def _model(comp: Composition) -> ActivityModel:
    from scipy.interpolate import RectBivariateSpline

    shares = _normalise(comp)
    M = particle_molar_mass(shares)    # mean molar mass of particles [kg/mol]
    imbalance = abs(comp.charge_imbalance)
    u = np.linspace(0.0, np.sqrt(S_GRID_MAX), 33)[1:]
    S = u ** 2
    SS, TT = np.meshgrid(S, T_GRID, indexing="ij")
    aw = _run(shares, SS.ravel(), TT.ravel(), comp.ph).reshape(SS.shape)
    m_sum = S / ((1 - S) * M)
    phi = -np.log(aw) / (M_W * m_sum[:, None])
    u_all = np.concatenate([[0.0], u])
    phi_all = np.vstack([np.ones((1, T_GRID.size)), phi])
    phi_spline = RectBivariateSpline(u_all, T_GRID, phi_all, kx=3, ky=3)
    # Gibbs-Duhem integral on a fine grid in u, per temperature node, then splined
    uf = np.linspace(0.0, np.sqrt(S_GRID_MAX), 2001)
    phif = phi_spline(uf, T_GRID)
    with np.errstate(divide="ignore", invalid="ignore"):
        integrand = np.where(uf[:, None] > 0, 2 * (1 - phif / (1 - uf[:, None] ** 2)) / uf[:, None], 0.0)
    # limit at u -> 0 by linear extrapolation of the integrand
    integrand[0] = 2 * integrand[1] - integrand[2]
    from scipy.integrate import cumulative_trapezoid
    I_dimless = cumulative_trapezoid(integrand, uf, axis=0, initial=0.0)   # times R T / M gives I(S)
    I_spline = RectBivariateSpline(uf, T_GRID, I_dimless, kx=3, ky=3)

    def _uv(S_, T_):
        S_, T_ = np.broadcast_arrays(np.asarray(S_, dtype=float), np.asarray(T_, dtype=float))
        return np.sqrt(np.clip(S_, 0, None)), T_, S_

    def ln_aw(S_, T_):
        uq, Tq, Sq = _uv(S_, T_)
        ph = phi_spline.ev(uq.ravel(), Tq.ravel()).reshape(uq.shape)
        return -ph * M_W * Sq / ((1 - Sq) * M)

    def gibbs(S_, T_):
        uq, Tq, Sq = _uv(S_, T_)
        integral = I_spline.ev(uq.ravel(), Tq.ravel()).reshape(uq.shape)
        rtm = R * Tq / M
        from scipy.special import xlogy
        return rtm * xlogy(Sq, Sq) - Sq * rtm * integral

    validity = Validity(S_GRID_MAX, float(T_GRID[0]), float(T_GRID[-1]), "PHREEQC pitzer.dat table")
    return ActivityModel("phreeqc", "PHREEQC with pitzer.dat, tabulated for this composition", "ions", False,
                         validity, "Parkhurst & Appelo 2013 (PHREEQC 3); Appelo 2015 (pitzer.dat)", ln_aw, gibbs, M,
                         extra={"charge_imbalance": imbalance, "shares": shares})
