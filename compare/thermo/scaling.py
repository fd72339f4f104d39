"""Scaling of a concentrate: saturation indices of the minerals a natural water can form, tabulated once per
composition over concentration factor and temperature from PHREEQC (pitzer.dat), and the highest concentration
that keeps every mineral under its limit.

A concentrate is the feed with part of its water taken away, every solute kept (a closed system: no gas leaves, no
mineral precipitates, pH follows from the charge and carbon balances). PHREEQC is run once for a composition: the feed
is defined at its temperature and pH, then water is removed or added in steps (REACTION of H2O) at each temperature of
the grid (REACTION_TEMPERATURE), and the saturation index SI = log10(IAP / K) of every phase pitzer.dat knows for
that water is read in one batch (PHREEQC's own SI, which counts the water activity in the ion activity product of
a hydrate such as gypsum; phreeqpython's ``Solution.si`` leaves that term out). Gases (CO2(g), H2O(g)) are left out. Cases then interpolate in the table (bicubic
splines in ln CF and T), which the tests hold against PHREEQC run directly.

The concentration factor CF is a ratio of salinities (mass fractions), CF = S / S_ref with S_ref the total of the
ions, which is what the technologies know about their brines. Removing water multiplies molalities by k; the
salinity ratio follows as CF = k (1 + X) / (1 + k X), X the feed's solute mass per kg of water.

Silica is limited by its concentration in the concentrate (mg/L of SiO2), as the trade states it, besides its
saturation index (amorphous silica, SiO2(a)).

References
----------
Parkhurst, D. L. and Appelo, C. A. J. (2013), Description of input and examples for PHREEQC version 3, USGS Techniques
and Methods 6-A43. Appelo, C. A. J. (2015), Appl. Geochem. 55, 62-71 (pitzer.dat).
Antony, A. et al. (2011), Scale formation and control in high pressure membrane water treatment systems: a review,
J. Membr. Sci. 383, 1-16.
Haidari, A. H., Witkamp, G. J. and Heijman, S. G. J. (2022), High silica concentration in RO concentrate, Water
Resources and Industry 27, 100171 (abstract: the safe practice keeps silica below 150 mg/L in the concentrate).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from .constants import M_W, T0_C
from .model import ModelError
from .phreeqc import Composition, IONS, _phreeqc, phreeqc_input

#: temperatures of the table [K]: 0-100 degC
T_GRID = T0_C + np.arange(0.0, 100.1, 10.0)
#: the table reaches salinities to this mass fraction [kg/kg] and molality factors to K_MAX
S_TABLE_MAX = 0.25
K_MIN, K_MAX, N_CF = 0.5, 100.0, 24
#: points per table interval scanned to find where a mineral reaches its limit (then one secant step)
_FINE = 4

#: number of PHREEQC batch runs made by this module (tests and benchmarks read it)
RUNS = {"tables": 0}


@dataclass(frozen=True)
class Limit:
    """A scaling limit: a saturation index (``kind = "si"``, SI = log10 of the saturation ratio) or a concentration in
    the concentrate (``kind = "concentration"``, kg/m^3 of the species, silica as SiO2)."""

    kind: str
    value: float


#: default limits per mineral, (without antiscalant, with antiscalant), each with its source and mark.
DEFAULT_LIMITS = {
    "Calcite": (Limit("si", 0.0), Limit("si", 1.8),
                "common practice: calcite at saturation without antiscalant; SI (about the Langelier index) up to 1.8 with "
                "antiscalant, a supplier rule of thumb with no open source"),
    "Gypsum": (Limit("si", 0.0), Limit("si", 0.36),
               "common practice: gypsum at saturation without antiscalant; 230 % of saturation (SI 0.36) with antiscalant, "
               "a supplier rule of thumb with no open source"),
    "Barite": (Limit("si", 0.0), Limit("si", 1.78),
               "common practice: barite at saturation without antiscalant; 6000 % of saturation (SI 1.78) with "
               "antiscalant, a supplier rule of thumb with no open source"),
    "Celestite": (Limit("si", 0.0), Limit("si", 0.9),
                  "common practice: celestite at saturation without antiscalant; 800 % of saturation (SI 0.9) with "
                  "antiscalant, a supplier rule of thumb with no open source"),
    "silica": (Limit("concentration", 0.150), Limit("concentration", 0.200),
               "published: silica below 150 mg/L in the concentrate, the safe practice as cited by Haidari et al. "
               "2022, Water Resources and Industry 27, 100171; common practice: about 200 mg/L with a silica antiscalant "
               "(no open source)"),
}
SILICA = "silica"


def _phase_names(ip, comp: Composition) -> list[str]:
    """Every phase PHREEQC can compute for the feed (gases left out)."""
    text = "\n".join(_solution_lines(comp, 1)) + "\nSAVE SOLUTION 1\nEND\n"
    ip.run_string(text)
    names = ip.get_phases(1) if hasattr(ip, "get_phases") else None
    if names is None:  # pragma: no cover - older phreeqpython
        raise ModelError("scaling needs phreeqpython >= 1.5 (pip install '.[ions]')")
    # names come comma-separated, and a few contain a comma themselves ("Boric_acid,s"): leave those out
    bad = {i for i, n in enumerate(names) if n and n[0].islower()}
    bad |= {i - 1 for i in bad}
    return [n for i, n in enumerate(names) if i not in bad and n and not n.endswith("(g)")]


def _solution_lines(comp: Composition, number: int) -> list[str]:
    lines = [f"SOLUTION {number}", f" temp {comp.temperature - T0_C:.6f}", " units mol/kgw"]
    if comp.ph is not None:
        lines.append(f" pH {comp.ph:.4f}")
    return lines + phreeqc_input(comp.molalities())


def solute_per_water(comp: Composition) -> float:
    """X: kg of solute per kg of water in the feed [-]."""
    return comp.salinity / (1.0 - comp.salinity)


def salinity_factor(k, X):
    """Salinity ratio CF of a solution whose molalities were multiplied by ``k`` (water removed), X the solute mass
    per kg of water before [-]: CF = k (1 + X) / (1 + k X)."""
    k = np.asarray(k, dtype=float)
    return k * (1 + X) / (1 + k * X)


def molality_factor(cf, X):
    """Inverse of :func:`salinity_factor`: k = CF / (1 + X - CF X)."""
    cf = np.asarray(cf, dtype=float)
    return cf / (1 + X - cf * X)


@dataclass(frozen=True)
class ScalingTable:
    """Saturation indices of one composition's concentrates, SI[mineral](ln CF, T), and its silica."""

    composition: Composition
    minerals: tuple
    ln_cf: np.ndarray        # grid of ln CF (salinity ratio to the ions' total) [-]
    temperatures: np.ndarray  # grid [K]
    si: np.ndarray           # (mineral, CF, T) saturation indices [-]
    silica_fraction: float   # SiO2 mass fraction of the feed [kg/kg]

    @functools.cached_property
    def _splines(self):
        from scipy.interpolate import RectBivariateSpline
        return [RectBivariateSpline(self.ln_cf, self.temperatures, self.si[i], kx=3, ky=3)
                for i in range(len(self.minerals))]

    @property
    def cf_range(self) -> tuple[float, float]:
        return float(np.exp(self.ln_cf[0])), float(np.exp(self.ln_cf[-1]))

    def in_range(self, cf, T):
        """True where (CF, T) lies inside the table."""
        lo, hi = self.cf_range
        cf, T = np.asarray(cf, dtype=float), np.asarray(T, dtype=float)
        return (cf >= lo * (1 - 1e-9)) & (cf <= hi * (1 + 1e-9)) & (T >= self.temperatures[0] - 1e-9) & \
            (T <= self.temperatures[-1] + 1e-9)

    def saturation_index(self, mineral: str, cf, T):
        """SI of ``mineral`` in the concentrate at salinity ratio ``cf`` [-] and temperature ``T`` [K] (held to
        the table's edges; :meth:`in_range` says where that happened)."""
        i = self.minerals.index(mineral)
        x, t = np.broadcast_arrays(np.log(np.clip(np.asarray(cf, dtype=float), *self.cf_range)),
                                   np.clip(np.asarray(T, dtype=float), self.temperatures[0], self.temperatures[-1]))
        return self._splines[i].ev(x.ravel(), t.ravel()).reshape(x.shape)

    def silica(self, cf, T):
        """SiO2 in the concentrate [kg/m^3]."""
        from .brine import density
        S = self.composition.salinity * np.asarray(cf, dtype=float)
        return self.silica_fraction * np.asarray(cf, dtype=float) * density(S, T, "ions")

    def max_concentration_factor(self, T, limits: dict[str, Limit]):
        """The highest salinity ratio CF that keeps every limited mineral under its limit at temperature ``T``
        [K] (limit values may be arrays of T's shape), and the index (into ``names``) of the mineral that sets it.

        Returns
        -------
        cf_max : ndarray [-], the table's upper end where no limit is met inside the table, its lower end where the
            limit is exceeded there already
        limiting : ndarray of int, index into ``names`` (-1: no limit met inside the table)
        names : list of the limited minerals in this water
        """
        T = np.atleast_1d(np.asarray(T, dtype=float))
        names = [m for m in limits if m in self.minerals or (m == SILICA and self.silica_fraction > 0)]
        lo, hi = self.cf_range
        if not names:
            return np.full(T.shape, hi), np.full(T.shape, -1), names
        grid = np.linspace(self.ln_cf[0], self.ln_cf[-1], (len(self.ln_cf) - 1) * _FINE + 1)
        found = np.full((len(names),) + T.shape, hi)
        for j, m in enumerate(names):
            value = np.broadcast_to(np.asarray(limits[m].value, dtype=float), T.shape)
            if m == SILICA:
                # concentration limit: c = w CF rho(S_ref CF, T); a fixed point converges in a few steps
                cf = value / (self.silica_fraction * 1000.0)
                for _ in range(4):
                    rho = self.silica(cf, T) / (self.silica_fraction * cf)
                    cf = value / (self.silica_fraction * rho)
                found[j] = np.clip(cf, lo, hi)
                continue
            # the SI on a fine grid of ln CF at each case's temperature, less the limit
            Tf, vf = T.reshape(-1, 1), value.reshape(-1, 1)
            si = self.saturation_index(m, np.exp(grid)[None, :], Tf) - vf
            over = si > 0
            first = np.argmax(over, axis=1)
            anywhere = over.any(axis=1)
            i1 = np.maximum(first, 1)
            rows = np.arange(T.size)
            a, b = si[rows, i1 - 1], si[rows, i1]
            frac = np.where(b > a, -a / np.where(b > a, b - a, 1.0), 0.0)
            x = grid[i1 - 1] + np.clip(frac, 0.0, 1.0) * (grid[i1] - grid[i1 - 1])
            # one secant step on the spline itself, with the bracket's slope
            slope = (b - a) / (grid[i1] - grid[i1 - 1])
            fx = self.saturation_index(m, np.exp(x), T.ravel()) - value.ravel()
            x = np.clip(x - fx / np.where(slope > 0, slope, np.inf), grid[i1 - 1], grid[i1])
            x = np.where(first == 0, grid[0], x)
            found[j] = np.where(anywhere, np.exp(x), hi).reshape(T.shape)
        k = np.argmin(found, axis=0)
        cf_max = np.take_along_axis(found, k[None], axis=0)[0]
        limiting = np.where(cf_max >= hi * (1 - 1e-12), -1, k)
        return cf_max, limiting, names


def limit_value(table: ScalingTable, mineral: str, cf, T):
    """The figure compared with a mineral's limit: its SI, or for silica its concentration [kg/m^3]."""
    return table.silica(cf, T) if mineral == SILICA else table.saturation_index(mineral, cf, T)


def _build(comp: Composition) -> ScalingTable:
    ip = _phreeqc()
    minerals = _phase_names(ip, comp)
    X = solute_per_water(comp)
    k_hi = min(K_MAX, 1.0 / (X * (1.0 / S_TABLE_MAX - 1.0))) if X > 0 else K_MAX
    if k_hi <= 1.0:
        raise ModelError(f"feed.ions: a composition totalling {comp.salinity * 1e3:.4g} g/kg is too salty for the "
                         f"scaling table (to {S_TABLE_MAX * 1e3:g} g/kg)")
    k = np.exp(np.linspace(np.log(K_MIN), np.log(k_hi), N_CF))
    water_mol = 1.0 / M_W
    steps = " ".join(f"{water_mol * (1.0 / kk - 1.0):.10f}" for kk in k)   # signed: + adds water, - removes it
    blocks = ["\n".join(_solution_lines(comp, 1)) + "\nSAVE SOLUTION 1\nEND"]
    for i, T in enumerate(T_GRID):
        block = ["USE SOLUTION 1", "REACTION 1", " H2O 1", f" {steps} moles", "REACTION_TEMPERATURE 1",
                 f" {T - T0_C:.4f}"]
        if i == 0:
            block += ["SELECTED_OUTPUT 1", " -reset false", " -state true", " -si " + " ".join(minerals),
                      "USER_PUNCH 1", " -headings water_kg", ' 10 PUNCH TOT("water")']
        blocks.append("\n".join(block + ["END"]))
    ip.run_string("\n".join(blocks) + "\n")
    RUNS["tables"] += 1
    rows = [r for r in ip.get_selected_output_array()[1:] if r[0] == "react"]
    if len(rows) != N_CF * T_GRID.size:
        raise RuntimeError(f"PHREEQC returned {len(rows)} rows for a scaling table of {N_CF * T_GRID.size}")
    arr = np.array([r[1:] for r in rows], dtype=float).reshape(T_GRID.size, N_CF, len(minerals) + 1)
    kk = 1.0 / arr[0, :, -1]                                     # molality factor from the water left [kg]
    ln_cf = np.log(salinity_factor(kk, X))
    si = np.transpose(arr[:, :, :-1], (2, 1, 0))                # (mineral, CF, T)
    silica = comp.fractions.get("SiO2", 0.0)
    return ScalingTable(comp, tuple(minerals), ln_cf, T_GRID.copy(), si, silica)


@functools.lru_cache(maxsize=8)
def scaling_table(comp: Composition) -> ScalingTable:
    """The saturation-index table of a composition, built by one PHREEQC batch run and kept for later calls."""
    if not any(IONS[k][2] for k, _ in comp.ions):
        raise ModelError("feed.ions: no ion that PHREEQC knows")
    return _build(comp)
