"""Scaling of 1,000 concentrates of one composition (recovery x temperature): one PHREEQC table and interpolation,
against 1,000 single PHREEQC runs (copy the feed, remove water, change temperature, read the indices).

Run by hand: ``python benchmarks/bench_scaling.py [N]``. Prints the time of each way, the number of PHREEQC batch
runs the table needed, their ratio, and the largest difference in SI between the two. Both read every mineral PHREEQC knows for the water.
"""

import sys
import time

import numpy as np

from compare.concentrate import scaling
from compare.thermo import scaling as sc
from compare.thermo.phreeqc import Composition, phreeqc_input

# the fictional brackish water of scenarios/saltbush-flat.toml (mg/L at 22 degC, pH 7.6)
MG_L = {"Na": 780, "K": 18, "Ca": 240, "Mg": 95, "Sr": 6, "Ba": 0.08, "Cl": 1150, "SO4": 900, "HCO3": 290,
        "F": 1.2, "Br": 3, "B": 0.8, "SiO2": 28}
MINERALS = ["Calcite", "Gypsum", "Anhydrite", "Barite", "Celestite", "SiO2(a)"]


def main(n: int = 1_000) -> None:
    from phreeqpython import PhreeqPython

    comp = Composition.of({k: v * 1e-3 / 1002.0 for k, v in MG_L.items()}, ph=7.6, temperature=295.15)
    side = int(round(np.sqrt(n)))
    r, T = np.meshgrid(np.linspace(0.3, 0.9, side), np.linspace(283.15, 343.15, n // side), indexing="ij")
    r, T = r.ravel(), T.ravel()
    S_f = comp.salinity
    S_b = S_f / (1 - r)
    limits = {m: v[1] for m, v in sc.DEFAULT_LIMITS.items()}

    from compare.thermo.brine import density
    density(np.array([0.01, 0.1]), np.array([300.0, 350.0]), "ions")   # import libraries, build density tables
    runs0 = sc.RUNS["tables"]
    t0 = time.perf_counter()
    table = sc.scaling_table(comp)
    t_build = time.perf_counter() - t0
    res = scaling(table, limits, S_f, S_b, 0.0, r, [T])
    t_table = time.perf_counter() - t0
    runs = sc.RUNS["tables"] - runs0

    pp = PhreeqPython(database="pitzer.dat")
    feed = pp.add_solution({"units": "mol/kgw", "temp": 22.0, "pH": 7.6,
                            **{k: float(v) for k, v in (x.split() for x in phreeqc_input(comp.molalities()))}})
    X = sc.solute_per_water(comp)
    k = sc.molality_factor(S_b / S_f, X)
    worst = 0.0
    every = list(table.minerals)                       # the single runs read every mineral, as the table does
    t0 = time.perf_counter()
    for i in range(r.size):
        sol = feed.copy()
        sol.remove_fraction("H2O", 1 - 1 / k[i])
        sol.change_temperature(T[i] - 273.15)
        pp.ip.run_string(f"USE SOLUTION {sol.number}\nREACTION 1\n H2O 1\n 0 moles\nSELECTED_OUTPUT 1\n"
                         f" -reset false\n -si {' '.join(every)}\nEND\n")
        direct = dict(zip(every, pp.ip.get_selected_output_array()[1]))
        worst = max(worst, max(abs(float(res.saturation_index[m][i]) - direct[m]) for m in MINERALS))
        sol.forget()
    t_single = time.perf_counter() - t0

    print(f"scaling of {r.size:,} concentrates (recovery 0.3-0.9 x temperature 10-70 degC), one composition")
    print(f"  table ({runs} PHREEQC batch run) + interpolation : {t_table:8.3f} s  (table {t_build:.3f} s)")
    print(f"  {r.size:,} single PHREEQC runs                    : {t_single:8.3f} s")
    print(f"  ratio                                           : {t_single / t_table:8.1f} x")
    print(f"  largest |SI difference| ({', '.join(MINERALS)}): {worst:.2e}")

    # the same grid through the whole pipeline (RO on the Saltbush Flat demo): PHREEQC batch runs counted
    from pathlib import Path

    from compare.pipeline import evaluate
    from compare.scenario import load
    scenario = load(Path(__file__).resolve().parents[1] / "scenarios" / "saltbush-flat.toml", ["med.enabled=false"])
    sc.scaling_table.cache_clear()
    runs0 = sc.RUNS["tables"]
    t0 = time.perf_counter()
    res = evaluate(scenario, {"ro.recovery": r, "feed.temperature": T})
    t_sweep = time.perf_counter() - t0
    ro = res.technologies[0]
    print(f"  pipeline, RO, {r.size:,} cases with scaling      : {t_sweep:8.3f} s  ({sc.RUNS['tables'] - runs0} "
          f"PHREEQC batch run; {int((~ro.feasible).sum())} cases infeasible)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 1_000)
