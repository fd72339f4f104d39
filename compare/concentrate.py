"""What a technology's concentrate means at the site, the same way for every technology: scaling (the saturation
indices of the concentrate, the limiting mineral, the highest recovery under every limit) and the water the site
takes in and sends back. Pure and vectorised, SI in and out; the pipeline applies it to every record.

A technology says where its concentrate is most prone to scale through its design figures (``details``):

``scaling_polarisation``
    concentration at the membrane wall over the bulk brine at the concentrate end [-] (RO and FO; 1 when absent);
``scaling_temperatures``
    not a detail but the technology's brine temperatures: the hottest brine (``hottest_brine_temperature`` [K]; MED:
    the top brine) and the coldest (``brine_temperature`` [K], the brine leaving); both are checked and the worse
    counts, since calcite and calcium sulfates grow less soluble when hot and silica when cold. Without them, the
    feed temperature.

The highest recovery follows from the salt balance with the brine at its limit: with CF_max the limiting salinity
ratio at the wall and beta the polarisation, S_b,max = CF_max S_ref / beta and r_max = (S_b,max - S_f) /
(S_b,max - S_p).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .thermo.scaling import SILICA, Limit, ScalingTable

POLARISATION = "scaling_polarisation"
HOTTEST = "hottest_brine_temperature"
BRINE_TEMPERATURE = "brine_temperature"
INTAKE = "intake_per_product"


@dataclass(frozen=True)
class Scaling:
    """Scaling of one technology's concentrate, per case (arrays of the case shape).

    Attributes
    ----------
    saturation_index : mineral -> SI at the concentrate's worst state [-]
    silica : SiO2 in the concentrate at its wall [kg/m^3]
    concentration_factor : wall salinity over the feed composition's total [-]
    temperature : the temperature of the worst state for the limiting mineral [K]
    limits : mineral -> the limit used (SI, or kg/m^3 for silica)
    limiting : index into ``names`` of the mineral that sets the limit (-1: none inside the table)
    names : the limited minerals, in order
    max_recovery : the highest recovery under every limit [-]
    above : where the technology's recovery is above ``max_recovery``
    in_table : where the concentrate lies inside the table (else its figures are held at the table's edge)
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
    silica = np.zeros(cf.shape)
    in_table = np.ones(cf.shape, dtype=bool)
    for T in temperatures:
        Tf = b(T)
        in_table &= table.in_range(cf, Tf)
        for m in table.minerals:
            v = table.saturation_index(m, cf, Tf)
            si[m] = v if m not in si else np.maximum(si[m], v)
        silica = np.maximum(silica, table.silica(cf, Tf) if table.silica_fraction > 0 else 0.0)
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
    above = ok & (r > r_max + 1e-6)
    rs = lambda x: np.asarray(x).reshape(shape)  # noqa: E731
    nan = lambda x: rs(np.where(ok, x, np.nan))  # noqa: E731
    return Scaling({m: nan(v) for m, v in si.items()}, nan(silica), nan(cf), rs(worst_T),
                   {m: lim.value for m, lim in limits.items() if m in names}, rs(np.where(ok, limiting, -1)),
                   tuple(names), nan(r_max), rs(above), rs(in_table | ~ok))


def recovery_for_limit(max_recovery, feed_salinity, product_salinity):
    """The brine salinity [kg/kg] that a design at ``max_recovery`` leaves (salt balance)."""
    r = np.asarray(max_recovery, dtype=float)
    return (np.asarray(feed_salinity, dtype=float) - r * np.asarray(product_salinity, dtype=float)) / (1 - r)


def site_flows(capacity, recovery, product_density, feed_density, brine_density, intake_per_product=None):
    """Intake and brine flows of a plant [m^3/s].

    Parameters
    ----------
    capacity : product flow [m^3/s]
    recovery : mass recovery of the technology's own streams [-]
    product_density, feed_density, brine_density : [kg/m^3]
    intake_per_product : mass of water taken in per mass of product [-] when more than the process feed is drawn
        (MED's cooling water); default 1 / recovery

    Returns
    -------
    intake, brine : [m^3/s]
    """
    m_p = np.asarray(capacity, dtype=float) * product_density
    r = np.asarray(recovery, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        intake_mass = m_p * (1.0 / r if intake_per_product is None else intake_per_product)
        brine_mass = m_p * (1.0 / r - 1.0)
    return intake_mass / feed_density, brine_mass / brine_density


__all__ = ["Scaling", "scaling", "site_flows", "recovery_for_limit", "SILICA", "POLARISATION", "HOTTEST",
           "BRINE_TEMPERATURE", "INTAKE"]
