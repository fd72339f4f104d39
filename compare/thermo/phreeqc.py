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
Charge balance is not forced; an imbalance above 5 % is reported.

Water activity comes from PHREEQC's ``ACT("H2O")`` in a USER_PUNCH block (``Solution.activity('H2O')`` of phreeqpython
does not return the water activity).

References
----------
Parkhurst, D. L. and Appelo, C. A. J. (2013), Description of input and examples for PHREEQC version 3, USGS Techniques
and Methods 6-A43. Appelo, C. A. J. (2015), Appl. Geochem. 55, 62-71 (pitzer.dat).
"""

from __future__ import annotations

import numpy as np

from .model import ActivityModel, ModelError, Validity
from .constants import M_W, R, T0_C

#: ions accepted, with the molar mass [kg/mol] and charge PHREEQC uses (pitzer.dat SOLUTION_MASTER_SPECIES)
IONS = {
    "Na": (0.0229898, 1, "Na"), "K": (0.0390983, 1, "K"), "Mg": (0.024305, 2, "Mg"), "Ca": (0.04008, 2, "Ca"),
    "Sr": (0.08762, 2, "Sr"), "Li": (0.006941, 1, "Li"), "Ba": (0.13733, 2, "Ba"),
    "Cl": (0.035453, -1, "Cl"), "Br": (0.079904, -1, "Br"), "SO4": (0.096062, -2, "S(6)"),
    "HCO3": (0.0610168, -1, "C(4)"),
}
S_GRID_MAX = 0.30
T_GRID = T0_C + np.arange(0.0, 101.0, 10.0)


def available() -> bool:
    """True when phreeqpython (and its bundled PHREEQC) can be imported."""
    try:
        import phreeqpython  # noqa: F401
    except Exception:
        return False
    return True


def _phreeqc():
    try:
        from phreeqpython import PhreeqPython
    except Exception as exc:  # pragma: no cover - depends on the platform
        raise ModelError("model phreeqc needs the optional extra 'ions' (pip install '.[ions]'); "
                         f"phreeqpython could not be imported: {exc}") from None
    return PhreeqPython(database="pitzer.dat").ip


def _normalise(composition: dict[str, float]) -> dict[str, float]:
    bad = [k for k in composition if k not in IONS]
    if bad:
        raise ModelError(f"feed.ions: expected ions among {', '.join(IONS)}, got {', '.join(bad)}")
    total = sum(composition.values())
    if total <= 0:
        raise ModelError("feed.ions: expected at least one ion with a positive concentration")
    return {k: v / total for k, v in composition.items() if v > 0}


def particle_molar_mass(composition: dict[str, float]) -> float:
    """Mean molar mass of the solute particles [kg/mol] of a composition (ion -> mass fraction, any scale)."""
    shares = _normalise(composition)
    return 1.0 / sum(w / IONS[k][0] for k, w in shares.items())


def _run(shares: dict[str, float], S, T):
    """phi and a_w from PHREEQC for each (S, T) pair."""
    ip = _phreeqc()
    blocks = []
    for i, (s, t) in enumerate(zip(S, T)):
        lines = [f"SOLUTION {i + 1}", f" temp {t - T0_C:.6f}", " units mol/kgw"]
        for ion, w in shares.items():
            m = w * s / ((1 - s) * IONS[ion][0])
            lines.append(f" {IONS[ion][2]} {m:.10e}")
        blocks.append("\n".join(lines))
    text = "\n".join(blocks) + "\nSELECTED_OUTPUT\n -reset false\nUSER_PUNCH\n -headings aw\n 10 PUNCH ACT(\"H2O\")\nEND\n"
    ip.run_string(text)
    rows = ip.get_selected_output_array()
    return np.array([r[0] for r in rows[1:]], dtype=float)


def phreeqc_model(composition: dict[str, float]) -> ActivityModel:
    """An :class:`ActivityModel` for the major-ion composition ``composition`` (ion -> mass fraction, any scale)."""
    from scipy.interpolate import RectBivariateSpline

    shares = _normalise(composition)
    M = particle_molar_mass(composition)    # mean molar mass of particles [kg/mol]
    charge = sum(w / IONS[k][0] * IONS[k][1] for k, w in shares.items())
    gross = sum(w / IONS[k][0] * abs(IONS[k][1]) for k, w in shares.items())
    imbalance = abs(charge) / gross
    u = np.linspace(0.0, np.sqrt(S_GRID_MAX), 33)[1:]
    S = u ** 2
    SS, TT = np.meshgrid(S, T_GRID, indexing="ij")
    aw = _run(shares, SS.ravel(), TT.ravel()).reshape(SS.shape)
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
