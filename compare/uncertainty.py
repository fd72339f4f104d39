"""Uncertain inputs: each ``[uncertainty]`` key's distribution truncated to the key's valid range, rank correlations
between keys (``[correlation]``) through a Gaussian copula, and physical inputs shared by construction.

Everything here maps uniforms to values row by row: a row of ``d`` uniforms in (0, 1) (one per uncertain key, in
sorted key order) becomes one case. Rows never look at each other, so any chunk of a seeded stream of uniforms gives
the same cases wherever it is evaluated.

Truncation
    A key's value must lie in its valid range ``[lo, hi]`` (open ends nudged inwards by 1e-9 relative). A
    distribution reaching beyond it is sampled by the inverse CDF on the truncated interval,
    ``x = F^-1(F(lo) + u (F(hi) - F(lo)))``: the shape inside the range is kept and no probability piles up on a
    bound (nothing is clipped). The share of the untruncated distribution outside the range is reported as a note.

Rank correlation
    ``[correlation]`` gives Spearman rank correlations between uncertain keys. The copula is Gaussian: uniforms go
    to normal scores, are mixed by a factor ``L`` of the normal-score correlation matrix ``R`` (``L L^T = R``, from
    its eigen-decomposition so that a singular matrix works), and come back through the normal CDF. The Pearson
    correlation of the normal scores is ``r = 2 sin(pi rho / 6)``, which gives the bivariate normal the Spearman
    correlation ``rho`` (Kruskal 1958, "Ordinal measures of association", J. Am. Stat. Assoc. 53, 814-861). The
    marginals stay uniform, so every key keeps its own distribution; monotone inverse CDFs keep the ranks.

Shared inputs
    :data:`SHARED`: a physical property that two parts of the scenario hold as separate keys but that is one
    property of one kind of equipment. When the source key is uncertain and the scenario gives the target neither a
    value nor a distribution of its own, the target takes the source's sampled value in every case (FO's RO
    regenerator uses the same membranes and pumps as the RO plant).
"""

from __future__ import annotations

import difflib

import numpy as np
from scipy import special

from .errors import InputError

#: target key -> source key: physical inputs shared by construction (only when the target's technology is enabled
#: and the scenario leaves the target at its default; see the module docstring)
SHARED: dict[str, str] = {f"fo.regenerator.{k}": f"ro.{k}" for k in (
    "water_permeability", "salt_permeability", "mass_transfer_coefficient", "pressure_drop_per_element",
    "pump_efficiency", "motor_efficiency", "energy_recovery_efficiency", "energy_recovery_mixing")}


# ------------------------------------------------------------------------------------------- distributions
def _norm_cdf(z):
    return special.ndtr(z)


def _norm_ppf(p):
    return special.ndtri(p)


def cdf(dist: dict, x) -> np.ndarray:
    """The untruncated distribution's CDF at ``x`` (SI)."""
    x = np.asarray(x, dtype=float)
    kind = dist["distribution"]
    if kind == "uniform":
        return np.clip((x - dist["low"]) / (dist["high"] - dist["low"]), 0.0, 1.0)
    if kind == "triangular":
        a, c, b = dist["low"], dist["mode"], dist["high"]
        if b == a:
            return (x >= a).astype(float)
        with np.errstate(divide="ignore", invalid="ignore"):
            left = np.where(c > a, (x - a) ** 2 / ((b - a) * (c - a)), 1.0)
            right = np.where(b > c, 1.0 - (b - x) ** 2 / ((b - a) * (b - c)), 1.0)
        return np.where(x <= a, 0.0, np.where(x >= b, 1.0, np.where(x <= c, left, right)))
    if kind == "normal":
        if dist["sd"] <= 0:
            return (x >= dist["mean"]).astype(float)
        return _norm_cdf((x - dist["mean"]) / dist["sd"])
    if kind == "lognormal":
        with np.errstate(divide="ignore", invalid="ignore"):
            z = np.log(np.where(x > 0, x, np.nan) / dist["median"]) / np.log(dist["gsd"])
        return np.where(x > 0, _norm_cdf(np.nan_to_num(z, nan=-np.inf)), 0.0)
    raise AssertionError(kind)  # pragma: no cover


def ppf(dist: dict, p) -> np.ndarray:
    """The untruncated distribution's inverse CDF at probabilities ``p`` in [0, 1] (SI)."""
    p = np.asarray(p, dtype=float)
    kind = dist["distribution"]
    if kind == "uniform":
        return dist["low"] + p * (dist["high"] - dist["low"])
    if kind == "triangular":
        a, c, b = dist["low"], dist["mode"], dist["high"]
        if b == a:
            return np.full_like(p, a)
        fc = (c - a) / (b - a)
        return np.where(p <= fc, a + np.sqrt(p * (b - a) * (c - a)), b - np.sqrt((1 - p) * (b - a) * (b - c)))
    if kind == "normal":
        return dist["mean"] + dist["sd"] * _norm_ppf(p)
    if kind == "lognormal":
        return dist["median"] * np.exp(np.log(dist["gsd"]) * _norm_ppf(p))
    raise AssertionError(kind)  # pragma: no cover


def valid_range(spec) -> tuple[float, float]:
    """A key's valid range as closed bounds: open ends nudged inwards (1e-9 relative)."""
    lo = -np.inf if spec.lo is None else float(spec.lo)
    hi = np.inf if spec.hi is None else float(spec.hi)
    if spec.lo_open and np.isfinite(lo):
        lo += abs(lo) * 1e-9 + 1e-12
    if spec.hi_open and np.isfinite(hi):
        hi -= abs(hi) * 1e-9 + 1e-12
    return lo, hi


def truncation(dist: dict, spec) -> tuple[float, float]:
    """(F(lo), F(hi)) of the distribution at the key's valid range."""
    lo, hi = valid_range(spec)
    f_lo = float(cdf(dist, lo)) if np.isfinite(lo) else 0.0
    f_hi = float(cdf(dist, hi)) if np.isfinite(hi) else 1.0
    return f_lo, f_hi


def truncated_ppf(dist: dict, spec, u) -> np.ndarray:
    """Values (SI) at uniforms ``u`` of the distribution truncated to the key's valid range (a count rounded)."""
    f_lo, f_hi = truncation(dist, spec)
    lo, hi = valid_range(spec)
    x = ppf(dist, f_lo + np.asarray(u, dtype=float) * (f_hi - f_lo))
    x = np.minimum(np.maximum(x, lo), hi)      # rounding of the last bit only: F(lo) <= p <= F(hi) already
    if spec.kind == "count":
        x = np.round(x)
    return x


def outside_share(dist: dict, spec) -> float:
    """The share of the untruncated distribution outside the key's valid range."""
    f_lo, f_hi = truncation(dist, spec)
    return max(0.0, 1.0 - (f_hi - f_lo))


# ------------------------------------------------------------------------------------------- correlation
def parse_correlation(raw, keys, label: str, errors: list) -> dict:
    """``[correlation]`` -> {(key_a, key_b): rho} with key_a < key_b; problems appended to ``errors``, one line each.

    The section holds, per uncertain key, an inline table of rank correlations with other uncertain keys:
    ``"energy.electricity_price" = { "energy.heat_price" = 0.7 }``. A pair may be given in either order or both
    (then with the same value); the diagonal, if given, must be 1; the whole matrix must be positive semi-definite.
    """
    where0 = f"{label}: correlation"
    if not isinstance(raw, dict):
        errors.append(f"{where0}: expected a table [correlation] such as "
                      f'"energy.electricity_price" = {{ "energy.heat_price" = 0.7 }}, got {raw!r}')
        return {}
    keys = list(keys)
    pairs: dict = {}
    ok = True

    def known(k, where):
        if k in keys:
            return True
        m = difflib.get_close_matches(k, keys, n=1, cutoff=0.5)
        hint = f' (did you mean "{m[0]}"?)' if m else ""
        errors.append(f'{where}: expected a key of [uncertainty] ({", ".join(keys) or "none given"}), got "{k}"{hint}')
        return False

    for a, row in raw.items():
        where = f"{where0}.{a}"
        if not known(a, where):
            ok = False
            continue
        if not isinstance(row, dict):
            errors.append(f'{where}: expected a table of rank correlations such as {{ "other.key" = 0.7 }}, '
                          f"got {row!r}")
            ok = False
            continue
        for b, rho in row.items():
            w = f"{where}.{b}"
            if not known(b, w):
                ok = False
                continue
            if isinstance(rho, bool) or not isinstance(rho, (int, float)) or not np.isfinite(rho) \
                    or abs(rho) > 1:
                errors.append(f"{w}: expected a rank correlation between -1 and 1, got {rho!r}")
                ok = False
                continue
            if a == b:
                if rho != 1:
                    errors.append(f"{w}: expected 1 for a key's correlation with itself, got {rho!r}")
                    ok = False
                continue
            pair = tuple(sorted((a, b)))
            if pair in pairs and pairs[pair] != float(rho):
                errors.append(f"{where0}: expected a symmetric matrix, got {pair[0]} ~ {pair[1]} = {pairs[pair]:g} "
                              f"and {pair[1]} ~ {pair[0]} = {float(rho):g}")
                ok = False
                continue
            pairs[pair] = float(rho)
    if ok and pairs:
        used = sorted({k for p in pairs for k in p})
        lam = float(np.linalg.eigvalsh(matrix(used, pairs)).min())
        if lam < -1e-10:
            errors.append(f"{where0}: expected a positive semi-definite matrix of rank correlations (a possible "
                          f"set of correlations), got one with smallest eigenvalue {lam:.3g}")
    return pairs


def matrix(keys, pairs: dict) -> np.ndarray:
    """The rank correlation matrix of ``keys`` (identity where no pair is given)."""
    idx = {k: i for i, k in enumerate(keys)}
    m = np.eye(len(keys))
    for (a, b), rho in pairs.items():
        if a in idx and b in idx:
            m[idx[a], idx[b]] = m[idx[b], idx[a]] = rho
    return m


def copula_factor(keys, pairs: dict) -> np.ndarray:
    """``L`` with ``L L^T = R``, R the normal-score correlation matrix of the rank correlations ``pairs``."""
    r = 2.0 * np.sin(np.pi * matrix(keys, pairs) / 6.0)
    np.fill_diagonal(r, 1.0)
    lam, vec = np.linalg.eigh(r)
    if lam.min() < 0:
        # a valid rank-correlation matrix can map to a slightly indefinite normal-score one: nearest by
        # eigenvalue clipping, rescaled to a unit diagonal (the marginals stay uniform)
        r = vec @ np.diag(np.clip(lam, 0, None)) @ vec.T
        s = np.sqrt(np.diag(r))
        r = r / np.outer(s, s)
        lam, vec = np.linalg.eigh(r)
    return vec * np.sqrt(np.clip(lam, 0, None))


def correlate(u: np.ndarray, keys, pairs: dict) -> np.ndarray:
    """Uniforms (n, d), independent columns in ``keys`` order -> uniforms with the rank correlations ``pairs``."""
    if not pairs:
        return u
    z = _norm_ppf(np.clip(u, 1e-15, 1 - 1e-15))
    return np.clip(_norm_cdf(z @ copula_factor(keys, pairs).T), 1e-15, 1 - 1e-15)


# ------------------------------------------------------------------------------------------- cases
def shared_targets(scenario, keys) -> dict:
    """target key -> source key for the shared inputs that apply to this scenario and these uncertain keys."""
    out = {}
    for target, source in SHARED.items():
        sec = target.split(".", 1)[0]
        if source not in keys or target in keys or not scenario.values.get(sec, {}).get("enabled", False):
            continue
        if sec == "fo" and scenario.values["fo"].get("regeneration") != "ro":
            continue
        if not str(scenario.sources.get(target, "default")).startswith("default"):
            continue               # the scenario gives the target its own value
        out[target] = source
    return out


def cases_from_uniforms(scenario, u: np.ndarray, specs: dict, correlated: bool = True) -> dict:
    """Uniform rows (n, d) in sorted key order -> key -> (n,) SI values: rank-correlated (unless ``correlated`` is
    False: one key at a time), truncated to each key's valid range, counts rounded, and shared inputs added."""
    unc = scenario.uncertainty
    keys = sorted(unc)
    if u.shape[1] != len(keys):
        raise InputError(f"uncertainty: expected {len(keys)} columns of uniforms, got {u.shape[1]}")
    u = np.asarray(u, dtype=float)
    if correlated:
        u = correlate(u, keys, scenario.correlation)
    out = {k: truncated_ppf(unc[k], specs[k], u[:, j]) for j, k in enumerate(keys)}
    for target, source in shared_targets(scenario, keys).items():
        out[target] = out[source]
    return out


def notes(scenario, specs: dict) -> list[str]:
    """One line per uncertain key whose distribution reaches beyond its valid range, and per shared input."""
    out = []
    for k in sorted(scenario.uncertainty):
        share = outside_share(scenario.uncertainty[k], specs[k])
        if share > 0:
            out.append(f"uncertainty.{k}: {100 * share:.2f} % of the {scenario.uncertainty[k]['distribution']} distribution "
                       f"lies outside the key's valid range; sampled from it truncated to that range")
    for target, source in shared_targets(scenario, sorted(scenario.uncertainty)).items():
        out.append(f"uncertainty.{source}: also sets {target} in every case (the same equipment; give {target} a "
                   f"value or a distribution of its own to draw it separately)")
    return out


def quantile(scenario, spec_of, key: str, p: float) -> float:
    """The ``p`` quantile (SI) of an uncertain key's truncated distribution."""
    return float(truncated_ppf(scenario.uncertainty[key], spec_of(key), np.array([p]))[0])
