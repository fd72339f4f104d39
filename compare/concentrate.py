"""What a technology's concentrate means at the site, the same way for every technology: scaling (the saturation
indices of the concentrate, the limiting mineral, the highest recovery under every limit) and the water the site
takes in and sends back. Pure and vectorised, SI in and out; the pipeline applies it to every record.

A technology says where its concentrate is most prone to scale by naming design figures of its ``details`` in its
registration (``Technology.concentrate``, role -> detail name):

``wall_salinity``
    the brine at the membrane wall at the concentrate end [kg/kg] (RO: the outlet, with its local flux; FO); the
    polarisation is its ratio to the brine leaving. Without it, the brine itself.
``hottest_brine_temperature``, ``brine_temperature``
    the hottest brine (MED: the top brine) and the brine leaving [K]; both are checked and the worse counts, since
    calcite and calcium sulfates grow less soluble when hot and silica when cold. Without them, the feed temperature.
``intake_per_product``
    water drawn per kg of product when the plant takes in more than its process feed (MED's cooling water).

The highest recovery follows from the salt balance with the brine at its limit: with CF_max the limiting salinity
ratio at the wall and beta the polarisation, S_b,max = CF_max S_ref / beta and r_max = (S_b,max - S_f) /
(S_b,max - S_p).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .thermo.scaling import SILICA, Limit, ScalingTable

#: a recovery counts as above the limit when it exceeds it by more than this [-] (0.005 percentage points): designs
#: at the limit converge to 1e-6 where the technology's own solution is that smooth, FO's to a few 1e-6
ABOVE_TOLERANCE = 5e-5

WALL = "wall_salinity"
HOTTEST = "hottest_brine_temperature"
BRINE_TEMPERATURE = "brine_temperature"
INTAKE = "intake_per_product"


@dataclass(frozen=True)
class Chemistry:
    """What the scaling check needs of the site: the composition's table, the limits (values scalar or per case),
    and whether a recovery above the limit is ``"infeasible"`` or a ``"warning"``."""

    table: ScalingTable
    limits: dict
    above_limit: str
    antiscalant: bool


@dataclass(frozen=True)
class Scaling:
    """Scaling of one technology's concentrate, per case (arrays of the case shape).

    Attributes
    ----------
    saturation_index : mineral -> SI at the concentrate's worst state [-]
    silica : SiO2 in the concentrate at its wall [kg/m^3]; NaN where the feed gave no silica (not 0: unknown)
    concentration_factor : wall salinity over the feed composition's total [-]
    temperature : the temperature of the worst state for the limiting mineral [K]
    limits : mineral -> the limit used (SI, or kg/m^3 for silica)
    limiting : index into ``names`` of the mineral that sets the limit (-1: none inside the table)
    names : the limited minerals, in order
    max_recovery : the highest recovery under every limit [-]
    above : where the technology's recovery is above ``max_recovery``
    in_table : where the concentrate lies inside the table (else its figures are held at the table's edge)
    not_given : the minerals with a limit that the feed's composition cannot form (silica not given, or a
        mineral whose ions are not in it): not checked, and shown as not given rather than as 0
    """

    saturation_index: dict
    silica: np.ndarray
    concentration_factor: np.ndarray
    temperature: np.ndarray
    limits: dict
    limiting: np.ndarray
    names: tuple
    max_recovery: np.ndarray
    above: np.ndarray
    in_table: np.ndarray
    not_given: tuple = ()

    def limiting_mineral(self, i) -> str | None:
        """Name of the limiting mineral of flat case ``i`` (None where no limit is met inside the table)."""
        k = int(np.asarray(self.limiting).reshape(-1)[i])
        return self.names[k] if k >= 0 else None


def scaling(table: ScalingTable, limits: dict[str, Limit], feed_salinity, brine_salinity, product_salinity,
            recovery, temperatures, polarisation=1.0) -> Scaling:
    """Scaling of a concentrate for every case.

    Parameters
    ----------
    table : the composition's saturation-index table
    limits : mineral -> :class:`Limit` (limit values broadcast to the case shape)
    feed_salinity, brine_salinity, product_salinity : [kg/kg]
    recovery : the technology's recovery [-]
    temperatures : one or more brine temperatures [K] checked; the worse state counts
    polarisation : wall over bulk brine salinity at the concentrate end [-]
    """
    shape = np.broadcast_shapes(np.shape(feed_salinity), np.shape(brine_salinity), np.shape(recovery),
                                np.shape(polarisation), *(np.shape(t) for t in temperatures))
    b = lambda x: np.broadcast_to(np.asarray(x, dtype=float), shape).ravel()  # noqa: E731
    S_f, S_b, S_p, beta = b(feed_salinity), b(brine_salinity), b(product_salinity), b(polarisation)
    ok = np.isfinite(S_b) & np.isfinite(beta)
    S_ref = table.composition.salinity
    cf = np.where(ok, S_b * beta / S_ref, 1.0)
    flat_limits = {m: Limit(lim.kind, b(lim.value)) for m, lim in limits.items()}
    si, worst_cf, worst_T, limiting, names = {}, None, None, None, ()
    given = table.silica_fraction > 0
    silica = np.zeros(cf.shape) if given else np.full(cf.shape, np.nan)    # no silica given: unknown, not 0
    in_table = np.ones(cf.shape, dtype=bool)
    for T in temperatures:
        Tf = b(T)
        in_table &= table.in_range(cf, Tf)
        for m in table.minerals:
            v = table.saturation_index(m, cf, Tf)
            si[m] = v if m not in si else np.maximum(si[m], v)
        if given:
            silica = np.maximum(silica, table.silica(cf, Tf))
        cf_max, lim, names = table.max_concentration_factor(Tf, flat_limits)
        if worst_cf is None:
            worst_cf, worst_T, limiting = cf_max, Tf.copy(), lim
        else:
            lower = cf_max < worst_cf
            worst_cf = np.where(lower, cf_max, worst_cf)
            worst_T = np.where(lower, Tf, worst_T)
            limiting = np.where(lower, lim, limiting)
    S_bmax = worst_cf * S_ref / beta
    with np.errstate(invalid="ignore", divide="ignore"):
        r_max = np.clip((S_bmax - S_f) / (S_bmax - S_p), 0.0, 1.0)
    r = b(recovery)
    above = ok & (r > r_max + ABOVE_TOLERANCE)
    rs = lambda x: np.asarray(x).reshape(shape)  # noqa: E731
    nan = lambda x: rs(np.where(ok, x, np.nan))  # noqa: E731
    return Scaling({m: nan(v) for m, v in si.items()}, nan(silica), nan(cf), rs(worst_T),
                   {m: rs(flat_limits[m].value) for m in names}, rs(np.where(ok, limiting, -1)),
                   tuple(names), nan(r_max), rs(above), rs(in_table | ~ok),
                   tuple(m for m in limits if m not in names))


def site_flows(capacity, recovery, product_density, feed_density, brine_density, intake_per_product=None):
    """Intake, process feed and brine flows of a plant [m^3/s].

    Parameters
    ----------
    capacity : product flow [m^3/s]
    recovery : mass recovery of the technology's own streams [-]
    product_density, feed_density, brine_density : [kg/m^3]
    intake_per_product : mass of water taken in per mass of product [-] when more than the process feed is drawn
        (MED's cooling water, of which the feed is a part); default 1 / recovery

    Returns
    -------
    intake, feed, brine : [m^3/s]
    """
    m_p = np.asarray(capacity, dtype=float) * product_density
    r = np.asarray(recovery, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        feed_mass = m_p / r
        intake_mass = feed_mass if intake_per_product is None else m_p * intake_per_product
        brine_mass = m_p * (1.0 / r - 1.0)
    return intake_mass / feed_density, feed_mass / feed_density, brine_mass / brine_density


def _grid(x, shape):
    return np.broadcast_to(np.asarray(x, dtype=float), shape)


def assess(name: str, roles: dict, perf, feed, chem: Chemistry, shape) -> tuple["Scaling", list]:
    """Scaling of one technology's concentrate on the case grid ``shape`` (N cases x M periods), and its flags.

    Where the technology has no working design (NaN brine), the brine is taken from the salt balance of the
    recovery asked with the product at its target, without polarisation, so that the limit is still reported.
    """
    from .flags import Flag

    S_f, r = _grid(feed.salinity, shape), _grid(perf.recovery, shape)
    S_p = _grid(perf.product_salinity, shape)
    S_p = np.where(np.isfinite(S_p), S_p, _grid(feed.product_salinity, shape))
    S_b = _grid(perf.brine_salinity, shape)
    with np.errstate(invalid="ignore", divide="ignore"):
        S_b = np.where(np.isfinite(S_b), S_b, (S_f - r * S_p) / (1 - r))
        wall = _grid(perf.details[roles[WALL]], shape) if WALL in roles else S_b
        beta = np.where(np.isfinite(wall) & (S_b > 0), wall / S_b, 1.0)
    temps = [_grid(perf.details[roles[k]], shape) for k in (HOTTEST, BRINE_TEMPERATURE) if k in roles]
    temps = [np.where(np.isfinite(t), t, _grid(feed.temperature, shape)) for t in temps] or \
        [_grid(feed.temperature, shape)]
    limits = {m: Limit(lim.kind, _grid(lim.value, shape)) for m, lim in chem.limits.items()}
    sc = scaling(chem.table, limits, S_f, S_b, S_p, r, temps, beta)
    flags = []
    kind = "infeasible" if chem.above_limit == "infeasible" else "note"
    where = "at the membrane wall" if WALL in roles else "in the brine"
    for j, mineral in enumerate(sc.names):
        mask = sc.above & (sc.limiting == j)
        if mask.any():
            lim = chem.limits[mineral]
            shown = (f"{float(np.max(lim.value)) * 1e3:.4g} mg/L of SiO2" if mineral == SILICA
                     else f"SI {float(np.max(lim.value)):.3g}")
            flags.append(Flag(kind, "scaling", "recovery", name,
                              f"{name.upper()}: recovery above the scaling limit: {mineral.lower()} passes its limit "
                              f"({shown}) {where}" + ("" if kind == "infeasible" else
                                                       " (kept: scaling.above_limit = \"warning\")"), mask))
    if (~sc.in_table).any():
        lo, hi = chem.table.cf_range
        flags.append(Flag("out_of_range", "scaling_table", "concentration_factor", name,
                          f"{name.upper()}: the concentrate is beyond the scaling table ({hi:.3g} times the feed's "
                          "salinity); its saturation indices are held at the table's edge", ~sc.in_table))
    return sc, flags


def per_case(sc: Scaling) -> Scaling:
    """A grid (N, M) scaling reduced to cases (N,): each case's period with the lowest highest recovery."""
    if np.ndim(sc.max_recovery) < 2:
        return sc
    key = np.where(np.isfinite(sc.max_recovery), sc.max_recovery, np.inf)
    k = np.argmin(key, axis=1)[:, None]

    def pick(x):
        return np.take_along_axis(np.asarray(x), k, axis=1)[:, 0]

    return Scaling({m: pick(v) for m, v in sc.saturation_index.items()}, pick(sc.silica),
                   pick(sc.concentration_factor), pick(sc.temperature),
                   {m: (pick(np.broadcast_to(v, sc.max_recovery.shape)) if np.ndim(v) else v)
                    for m, v in sc.limits.items()},
                   pick(sc.limiting), sc.names, pick(sc.max_recovery), np.asarray(sc.above).any(axis=1),
                   np.asarray(sc.in_table).all(axis=1), sc.not_given)


__all__ = ["Scaling", "Chemistry", "scaling", "assess", "per_case", "site_flows", "SILICA",
           "WALL", "HOTTEST", "BRINE_TEMPERATURE", "INTAKE"]
