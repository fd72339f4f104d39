"""Command line: ``desal`` (also ``python -m compare``).

One function per command, one error boundary (:func:`main`): bad input is one line and exit status 2, Ctrl-C is 130,
anything unexpected is a short message and exit status 1 (``--debug`` shows the traceback). Nothing here computes.
"""

from __future__ import annotations

import argparse
import sys

import numpy as np

from . import __version__
from .errors import InputError, InputErrors

FORMATS = ("table", "json", "csv", "markdown")


class _Parser(argparse.ArgumentParser):
    """argparse that reports a usage problem as one line through the error boundary."""

    def error(self, message):  # noqa: D401 - argparse API
        raise InputError(f"{self.prog}: {message}")


# ------------------------------------------------------------------------------------------------------ helpers
def _parse_recovery(text: str, where: str = "--recovery") -> np.ndarray:
    """``0.5``, ``50%``, a list ``0.3,0.5`` or a range ``0.3:0.7:5`` (start:stop:count, inclusive)."""
    expect = 'a mass recovery 0 <= r < 1 such as "0.5", a list "0.3,0.5" or a range "0.3:0.7:5"'

    def one(t):
        t = t.strip()
        try:
            v = float(t[:-1]) / 100 if t.endswith("%") else float(t)
        except ValueError:
            raise InputError(f'{where}: expected {expect}, got "{text}"') from None
        return v

    if ":" in text:
        parts = text.split(":")
        if len(parts) != 3:
            raise InputError(f'{where}: expected {expect}, got "{text}"')
        try:
            n = int(parts[2])
        except ValueError:
            raise InputError(f'{where}: expected {expect} (the count a whole number), got "{text}"') from None
        if n < 1:
            raise InputError(f'{where}: expected {expect} (a count of at least 1), got "{text}"')
        values = np.round(np.linspace(one(parts[0]), one(parts[1]), n), 12)
    else:
        values = np.array([one(t) for t in text.split(",")])
    bad = values[(values < 0) | (values >= 1) | ~np.isfinite(values)]
    if bad.size:
        raise InputError(f'{where}: expected {expect}, got "{text}" ({bad[0]:g} is outside 0 <= r < 1)')
    return values


def _emit(fmt: str, payload, *, table, markdown, csv_rows) -> None:
    """One output path for every format."""
    from .present.files import to_csv, to_json

    if fmt == "json":
        sys.stdout.write(to_json(payload))
    elif fmt == "csv":
        sys.stdout.write(to_csv(csv_rows()))
    elif fmt == "markdown":
        sys.stdout.write(markdown())
    else:
        table()


def _console():
    from rich.console import Console

    class _Console(Console):
        def on_broken_pipe(self) -> None:      # rich would exit 1; a closed pipe is the reader's choice
            raise BrokenPipeError()
    return _Console(highlight=False)


# ------------------------------------------------------------------------------------------------------ commands
def cmd_floor(args) -> int:
    """``desal floor``: least work and osmotic pressure of one feed."""
    from .present import CAUTION
    from .present.records import floor_record
    from .present.tables import Layout, markdown_report, print_tables, rich_table
    from .thermo.activity import get_model
    from .thermo.brine import mass_fraction_from_concentration
    from .units import parse_salinity, parse_temperature

    T = parse_temperature(args.temperature, where="--temperature")
    try:
        model = get_model(args.model, args.water)
    except ValueError as exc:
        raise InputError(f"--model: {exc}") from None
    v = model.validity
    t_lo, t_hi = v.temperature_limits
    if not (t_lo - 1e-9 <= T <= t_hi + 1e-9):
        raise InputError(f"--temperature: expected a temperature within the reach of model {model.name} "
                         f"({t_lo - 273.15:g}-{t_hi - 273.15:g} degC), got \"{args.temperature}\"")

    def salinity(text, where):
        kind, value = parse_salinity(text, where=where)
        return float(mass_fraction_from_concentration(value, T, args.water)) if kind == "concentration" else value

    S_f = salinity(args.salinity, "--salinity")
    if not (0 < S_f <= v.max_salinity):
        raise InputError(f"--salinity: expected a salinity above zero within the reach of model {model.name} (up to "
                         f"{v.max_salinity * 1e3:.4g} g/kg), got \"{args.salinity}\"")
    S_p = salinity(args.product_salinity, "--product-salinity")
    if S_p >= S_f:
        raise InputError(f'--product-salinity: expected a product salinity below the feed salinity '
                         f'({S_f * 1e3:.4g} g/kg), got "{args.product_salinity}"')
    r = _parse_recovery(args.recovery)
    S_b_max = (S_f - r.max() * S_p) / (1 - r.max())
    if S_b_max > v.max_salinity:
        raise InputError(f'--recovery: expected a recovery that leaves a liquid brine within the reach of model '
                         f'{model.name} (brine up to {v.max_salinity * 1e3:.4g} g/kg), got "{args.recovery}" '
                         f'(the brine would be {S_b_max * 1e3:.0f} g/kg)')
    single = r.size == 1
    rec = floor_record(model, S_f, T, float(r[0]) if single else r, S_p)
    if args.strict:
        bad = [f for f in rec["flags"] if f["kind"] == "out_of_range"]
        if bad:
            from .flags import strict_text
            raise InputError(f"--strict: out_of_range {bad[0]['code']} ({bad[0]['model']}): "
                             f"{strict_text(bad[0]['message'])}")
    rec["notice"] = CAUTION

    feed_rows = [
        ["water / model", f"{rec['water']} / {rec['model']}"],
        ["feed salinity [g/kg]", rec["salinity_g_per_kg"]],
        ["temperature [degC]", rec["temperature_c"]],
        ["product salinity [g/kg]", rec["product_salinity_g_per_kg"]],
        ["water activity", f"{rec['water_activity']:.6f}"],
        ["osmotic coefficient", f"{rec['osmotic_coefficient']:.5f}"],
        ["osmotic pressure [bar]", rec["osmotic_pressure_bar"]],
        ["least work, zero recovery [kWh/m3]", rec["least_work_kwh_per_m3_zero_recovery"]],
    ]
    rec_cols = ["recovery", "brine [g/kg]", "brine osmotic pressure [bar]", "least work [kWh/m3]"]
    rec_rows = [list(x) for x in zip(np.atleast_1d(rec["recovery"]), np.atleast_1d(rec["brine_salinity_g_per_kg"]),
                                     np.atleast_1d(rec["brine_osmotic_pressure_bar"]),
                                     np.atleast_1d(rec["least_work_kwh_per_m3"]))]

    def csv_rows():
        base = {k: v for k, v in rec.items() if k not in ("recovery", "brine_salinity_g_per_kg",
                                                           "brine_osmotic_pressure_bar", "least_work_kwh_per_m3",
                                                           "warnings", "notice")}
        base.pop("flags")
        codes = "; ".join(f"{f['kind']}:{f['code']}" for f in rec["flags"])
        return [dict(base, recovery=row[0], brine_salinity_g_per_kg=row[1], brine_osmotic_pressure_bar=row[2],
                     least_work_kwh_per_m3=row[3], flags=codes, warnings=rec["warnings"]) for row in rec_rows]

    def table():
        print_tables(_console(), [rich_table("Thermodynamic floor", ["feed", "value"], feed_rows,
                                             layout=Layout("mixed")),
                                  rich_table("", rec_cols, rec_rows)], rec["warnings"])

    def markdown():
        return markdown_report("Thermodynamic floor", [("Feed", ["feed", "value"], feed_rows, Layout("mixed")),
                                                       ("Recovery", rec_cols, rec_rows)], rec["warnings"])

    _emit(args.format, rec, table=table, markdown=markdown, csv_rows=csv_rows)
    return 0


def cmd_models(args) -> int:
    """``desal models``: property and technology models with validity ranges and references."""
    from .present.tables import Layout, markdown_report, print_tables, rich_table
    from .registry import model_catalogue

    cat = model_catalogue()
    cols = ["kind", "name", "applies to", "validity", "reference"]
    rows = [[m["kind"], m["name"], m["applies_to"], m["validity"], m["reference"]] for m in cat]
    layout = Layout("mixed", text=(2, 3, 4), keys=(1,))
    _emit(args.format, {"models": cat},
          table=lambda: print_tables(_console(), [rich_table("Models", cols, rows, layout=layout)], []),
          markdown=lambda: markdown_report("Models", [("", cols, rows, layout)], []),
          csv_rows=lambda: cat)
    return 0


def _load_all(paths, overrides):
    from .errors import InputErrors
    from .scenario import load

    scenarios, errors = [], []
    for path in paths:
        try:
            scenarios.append(load(path, overrides))
        except InputErrors as exc:
            errors += exc.messages
        except InputError as exc:
            errors.append(str(exc))
    if errors:
        raise InputErrors(errors)
    return scenarios


def cmd_compare(args) -> int:
    """``desal compare``: every enabled technology for each scenario, side by side."""
    from .pipeline import check_strict, evaluate
    from .present.files import RunFolder, to_csv, to_json
    from .present.records import payload as _payload
    from .present.tables import markdown_compare, print_compare
    from .runrecord import run_record

    _check_save_arguments(args)
    scenarios = _load_all(args.scenario, args.set or [])
    results = [evaluate(s) for s in scenarios]
    if args.strict:
        for r in results:
            check_strict(r)
    payloads = [_payload(r) for r in results]
    csv_text = to_csv([dict(scenario=p["scenario"], **rec) for p in payloads for rec in p["results"]])
    json_text = to_json(payloads[0] if len(payloads) == 1 else payloads)
    md_text = "\n".join(markdown_compare(p) for p in payloads)
    saved = None
    if not args.no_save:
        label = scenarios[0].name if len(scenarios) == 1 else f"{len(scenarios)}-scenarios"
        with RunFolder(args.parent, label) as folder:
            files = {"results.json": json_text, "results.csv": csv_text, "report.md": md_text,
                     "run.json": to_json(run_record(scenarios, ["desal", *args.argv]))}
            for name, text in files.items():
                folder.write(name, text)
            if args.plot:
                from .present.plots import compare_figure
                compare_figure(payloads, folder)
            saved = folder.commit()
    if args.format == "json":
        sys.stdout.write(json_text)
    elif args.format == "csv":
        sys.stdout.write(csv_text)
    elif args.format == "markdown":
        sys.stdout.write(md_text)
    else:
        console = _console()
        for p in payloads:
            print_compare(console, p)
            if not p["results"]:
                console.print("no technology is enabled or registered: only the floor is shown", highlight=False)
    if saved is not None:
        print(f"saved: {saved}", file=sys.stderr)
    return 0


def cmd_sweep(args) -> int:
    """``desal sweep``: a grid or Monte Carlo samples of one scenario."""
    from . import sweep as sw
    from .present.files import RunFolder, to_json
    from .present.tables import sweep_markdown, sweep_tables
    from .runrecord import run_record

    _check_save_arguments(args)
    if bool(args.vary) == (args.samples is not None):
        raise InputError("sweep: expected either --vary (a grid) or --samples (Monte Carlo), got "
                         + ("both" if args.vary else "neither"))
    if args.chunk is not None and args.chunk < 1:
        raise InputError(f"--chunk: expected a number of cases of 1 or more, got {args.chunk}")
    if args.workers is not None and args.workers < 1:
        raise InputError(f"--workers: expected a number of worker processes of 1 or more, got {args.workers}")
    if args.workers is not None and args.scheduler:
        raise InputError("--workers and --scheduler: expected one of them, got both")
    if args.sensitivity and args.samples is None:
        raise InputError(f"--sensitivity {args.sensitivity}: expected --samples N (the Monte Carlo it analyses), "
                         "got a grid")
    if args.sensitivity == "sobol" and args.lhs:
        raise InputError("--lhs: --sensitivity sobol draws its own design (Sobol points); expected no --lhs, got it")
    if not 0 <= args.seed < 2 ** 63:
        raise InputError(f"--seed: expected a whole number from 0 to 2^63 - 1, got {args.seed}")
    if args.samples is not None and args.samples < 1:
        raise InputError(f"--samples: expected a number of samples of 1 or more, got {args.samples}")
    scenario = _load_all([args.scenario], args.set or [])[0]
    if args.vary:
        axes = [sw.parse_vary(v, scenario) for v in args.vary]
        _check_sweep_size(args, scenario, int(np.prod([float(a.values.size) for a in axes])))
        source, mode, notes = sw.grid(axes), "grid", []
    else:
        axes = []
        _check_sweep_size(args, scenario, args.samples * (len(scenario.uncertainty) + 2)
                          if args.sensitivity == "sobol" else args.samples)
        if args.sensitivity == "sobol":
            from .sensitivity import sobol_cases
            cases, _, notes = sobol_cases(scenario, args.samples, args.seed)
            source = sw.Given(cases)
        else:
            source = sw.sampler(scenario, args.samples, args.seed, args.lhs)
            notes = sw.sampling_notes(scenario)
        mode = "samples"
    from .scenario import reach_errors
    label = scenario.path or scenario.name
    n = source.n
    chunk = args.chunk or sw.default_chunk(scenario)
    for start in range(0, n, max(chunk, 100_000)):          # values beyond the models' reach, before any work
        part = source.draw(start, min(n, start + max(chunk, 100_000)))
        problems = reach_errors(scenario.values, lambda d: (f"--vary {d}" if mode == "grid" else
                                                            f"{label}: uncertainty.{d}") if d in part
                                else f"{label}: {d}", scenario.texts, varied=part)
        if problems:
            raise InputErrors(problems)
    from . import executor as ex
    cases_format = args.cases or ("parquet" if _has_pyarrow() else "csv")
    if cases_format == "parquet" and not _has_pyarrow():
        raise InputError("--cases parquet: expected the optional extra 'parquet' (pyarrow) installed, got none; "
                         "use --cases csv")
    executor = ex.make(args.workers, args.scheduler)
    # the folder's name says how the cases were made: grid, samples, lhs, sobol or tornado
    how = "grid" if mode == "grid" else args.sensitivity or ("lhs" if args.lhs else "samples")
    folder = None if args.no_save else RunFolder(args.parent, f"{scenario.name}-sweep-{how}")
    frames = [] if args.format == "csv" else None
    csv_file = None
    try:
        if folder is not None and cases_format == "csv":
            csv_file = folder.open("cases.csv")
        state = {"header": True, "part": 0}

        def sink(frame):
            if args.sensitivity == "sobol":       # which block of Saltelli's design each row belongs to
                from .sensitivity import block_labels
                frame.insert(1, "sobol_block", block_labels(sorted(scenario.uncertainty), args.samples,
                                                            frame["case"].to_numpy()))
            if csv_file is not None:
                frame.to_csv(csv_file, index=False, header=state["header"])
                state["header"] = False
            elif folder is not None:
                _write_part(folder, state["part"], frame)
                state["part"] += 1
            if frames is not None:
                frames.append(frame)
        with _progress(n, quiet=args.quiet) as progress:
            result = sw.run(scenario, source, mode=mode, chunk=chunk, progress=progress,
                            sink=sink if (folder is not None or frames is not None) else None, axes=axes,
                            warnings=notes, seed=args.seed if mode == "samples" else None, lhs=args.lhs,
                            executor=executor)
        sensitivity = None
        if args.sensitivity:
            from .sensitivity import analyse
            sensitivity, result = analyse(args.sensitivity, scenario, result, args.samples, args.seed, args.chunk)
        body = sw.payload(result, sensitivity)
        saved = None
        if folder is not None:
            if csv_file is not None:
                csv_file.close()
            folder.write("summary.json", to_json(body))
            if mode == "grid":
                folder.write("grid.csv", sw.grid_frame(result).to_csv(index=False))
            folder.write("report.md", sweep_markdown(body))
            folder.write("run.json", to_json(run_record([scenario], ["desal", *args.argv])))
            if args.plot:
                from .present import plots
                (plots.grid_figure if mode == "grid" else plots.samples_figure)(result, folder)
                if sensitivity is not None:
                    plots.sensitivity_figure(sensitivity, scenario, folder)
            saved = folder.commit()
    finally:
        executor.close()
        if folder is not None and folder.path is None:
            if csv_file is not None and not csv_file.closed:
                csv_file.close()
            folder.discard()
    if args.format == "json":
        sys.stdout.write(to_json(body))
    elif args.format == "csv":
        import pandas as pd
        sys.stdout.write(pd.concat(frames, ignore_index=True).to_csv(index=False))
    elif args.format == "markdown":
        sys.stdout.write(sweep_markdown(body))
    else:
        from rich.console import Console
        # piped output is not cut at 80 columns: a sweep's tables are wide
        sweep_tables(Console(highlight=False, width=None if sys.stdout.isatty() else 160), body)
    if saved is not None:
        print(f"saved: {saved}", file=sys.stderr)
    return 0


def _bytes(n: float) -> str:
    for unit, size in (("TB", 1e12), ("GB", 1e9), ("MB", 1e6)):
        if n >= size:
            return f"{n / size:,.3g} {unit}"
    return f"{n / 1e3:,.3g} kB"


def _duration(s: float) -> str:
    for unit, size in (("days", 86400), ("hours", 3600), ("minutes", 60)):
        if s >= size:
            return f"{s / size:,.3g} {unit}"
    return f"{s:.0f} s"


def _check_sweep_size(args, scenario, n_cases: int) -> None:
    """Refuse, before anything is drawn or allocated, a sweep beyond :data:`compare.sweep.MAX_EVALUATIONS` (unless
    --allow-large) or one whose cases file cannot fit on the disk of --out (always)."""
    import os
    import shutil

    from . import sweep as sw

    est = sw.size_estimate(scenario, n_cases)
    what = (f"{est['cases']:,} cases x {est['technologies']} technologies x {est['periods']} period"
            f"{'s' if est['periods'] > 1 else ''} = {est['evaluations']:,.0f} evaluations (about "
            f"{_bytes(est['memory'])} of memory, {_bytes(est['disk'])} of cases file, {_duration(est['seconds'])})")
    if est["evaluations"] > sw.MAX_EVALUATIONS and not args.allow_large:
        raise InputError(f"sweep: expected at most {sw.MAX_EVALUATIONS:,} evaluations, got {what}; pass "
                         "--allow-large to run it anyway")
    memory = getattr(os, "sysconf", None) and os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    if memory and est["memory"] > memory:
        raise InputError(f"sweep: expected a sweep that fits in this machine's memory ({_bytes(memory)}), got "
                         f"{what}")
    if args.parent is not None:
        probe = args.parent
        while not probe.exists() and probe.parent != probe:
            probe = probe.parent
        free = shutil.disk_usage(probe).free
        if est["disk"] > free:
            raise InputError(f"sweep: expected a cases file that fits on the disk of {probe} ({_bytes(free)} "
                             f"free), got {what}")


class _progress:
    """A rich progress bar on stderr when it is a terminal (and not --quiet); otherwise silent."""

    def __init__(self, total: int, quiet: bool):
        self.total, self.bar, self.task = total, None, None
        if not quiet and sys.stderr.isatty():
            from rich.console import Console
            from rich.progress import BarColumn, MofNCompleteColumn, Progress, TimeRemainingColumn
            self.bar = Progress("sweep", BarColumn(), MofNCompleteColumn(), TimeRemainingColumn(),
                                console=Console(stderr=True), transient=True)

    def __enter__(self):
        if self.bar is None:
            return None
        self.bar.start()
        self.task = self.bar.add_task("sweep", total=self.total)
        return lambda done, total: self.bar.update(self.task, completed=done)

    def __exit__(self, *exc):
        if self.bar is not None:
            self.bar.stop()
        return False


def _has_pyarrow() -> bool:
    import importlib.util
    return importlib.util.find_spec("pyarrow") is not None


def _write_part(folder, index: int, frame) -> None:
    """One chunk's rows as ``cases/part-NNNNN.parquet`` (the parts read together as one table, in case order)."""
    import pyarrow as pa
    import pyarrow.parquet as pq
    path = folder.file(f"cases/part-{index:05d}.parquet")
    path.parent.mkdir(exist_ok=True)
    pq.write_table(pa.Table.from_pandas(frame, preserve_index=False), str(path))


def cmd_check(args) -> int:
    """``desal check``: validate scenarios and print every resolved value with its source."""
    from .present.tables import Layout, markdown_report, print_tables, rich_table

    scenarios = _load_all(args.scenario, args.set or [])
    payload, tables, sections = [], [], []
    layout = Layout("mixed", text=(1, 2), keys=(0,))
    for s in scenarios:
        rows = [[k, _show_value(s.texts[k]), s.sources[k]] for k in s.texts]
        payload.append({"scenario": s.name, "path": s.path, "sha256": s.sha256,
                        "technologies": s.technologies, "uncertainty": s.uncertainty,
                        "rank_correlations": [{"keys": list(k), "rho": r} for k, r in sorted(s.correlation.items())],
                        "inputs": {k: {"value": s.texts[k], "source": s.sources[k]} for k in s.texts}})
        tables.append(rich_table(f"{s.name}: valid; compares {', '.join(s.technologies) or 'no technology'}",
                                 ["key", "value", "source"], rows, layout=layout))
        sections.append((s.name, ["key", "value", "source"], rows, layout))
    _emit(args.format, payload[0] if len(payload) == 1 else payload,
          table=lambda: print_tables(_console(), tables, []),
          markdown=lambda: markdown_report("Resolved scenarios", sections, []),
          csv_rows=lambda: [dict(scenario=p["scenario"], key=k,
                                 value=_show_value(v["value"]) if isinstance(v["value"], bool) else v["value"],
                                 source=v["source"])
                            for p in payload for k, v in p["inputs"].items()])
    return 0


def _show_value(v):
    from .present.tables import as_written
    return as_written(v)


# ------------------------------------------------------------------------------------------------ report, claims
def cmd_claim(args) -> int:
    """``desal claim``: a claimed energy figure judged against the floor and this tool's designs."""
    from .claim import judge, parse_cli_claim
    from .present import CAUTION
    from .present.claims import claims_csv_rows, claims_markdown, print_claims
    from .scenario import SITE_SECTIONS, sections

    scenario = _load_all([args.scenario], args.set or [])[0]
    if args.technology or args.electricity:
        if not (args.technology and args.electricity):
            raise InputError("claim: expected --technology and --electricity together, got "
                             + ("--technology" if args.technology else "--electricity") + " alone")
        claims = [parse_cli_claim(args, [t for t in sections() if t not in SITE_SECTIONS])]
    elif scenario.claims:
        claims = list(scenario.claims)
    else:
        raise InputError(f"claim: expected --technology and --electricity, or a [claim] section in {args.scenario}, "
                         "got neither")
    body = {"scenario": scenario.name, "claims": [judge(args.scenario, c, args.set or []) for c in claims],
            "notice": CAUTION}
    _emit(args.format, body, table=lambda: print_claims(_console(), body), markdown=lambda: claims_markdown(body),
          csv_rows=lambda: claims_csv_rows(body))
    return 0


def cmd_report(args) -> int:
    """``desal report``: one self-contained report.html (and with --pdf a PDF) in a new run folder."""
    import json

    from .claim import judge, load_claims
    from .pipeline import evaluate
    from .present.files import to_json
    from .present.records import payload as _payload
    from .present.report import read_sweep, sweep_mismatch, write_report
    from .runrecord import run_record

    from .present.files import check_parent

    parent = check_parent(args.out)
    scenario = _load_all([args.scenario], args.set or [])[0]
    claims = list(scenario.claims) + (load_claims(args.claim_file) if args.claim_file else [])
    sweep = read_sweep(args.sweep) if args.sweep else None
    payload = json.loads(to_json(_payload(evaluate(scenario))))      # exactly what compare --format json prints
    judgements = [judge(args.scenario, c, args.set or []) for c in claims]
    run = json.loads(to_json(run_record([scenario], ["desal", *args.argv])))
    # a sweep of another scenario is shown (each figure in its own units), but never silently
    mismatch = sweep_mismatch(sweep, run) if sweep else None
    if mismatch:
        print(f"warning: --sweep: {mismatch}", file=sys.stderr)
    saved, notes = write_report(parent, scenario.name, payload, run, judgements, sweep,
                                pdf=args.pdf, mismatch=mismatch)
    for line in notes:
        print(line, file=sys.stderr)
    print(f"saved: {saved}", file=sys.stderr)
    return 0


def _report_parsers(sub) -> None:
    r = sub.add_parser("report", help="one self-contained HTML report of a scenario (inputs, floor, technologies, "
                                      "figures, flags, claims, cautions)",
                       description="Evaluate a scenario and write one self-contained report.html (inline CSS and "
                                   "SVG, no script, nothing fetched) into a new run folder, with a screenshot "
                                   "(report.png) when headless Chromium is installed.")
    r.add_argument("scenario", metavar="SCENARIO", help="scenario TOML file")
    r.add_argument("--set", action="append", metavar="K=V",
                   help="override a scenario key, e.g. --set ro.recovery=0.5 (repeatable)")
    r.add_argument("--claim-file", metavar="F", help="a TOML file of [claim] or [[claim]] tables to judge as well")
    r.add_argument("--sweep", metavar="DIR", help="a sweep run folder whose break-even or distributions to show")
    r.add_argument("--out", metavar="DIR", help="folder under which the run folder is created (default results/)")
    r.add_argument("--pdf", action="store_true", help="also print the page to report.pdf with headless Chromium "
                                                      "(says so plainly when it is not installed)")
    r.set_defaults(func=cmd_report)

    c = sub.add_parser("claim", help="judge a claimed electricity (and heat) per m3 against the floor and this "
                                     "tool's designs",
                       description="Judge a claimed specific energy of a technology at a scenario's site: below the "
                                   "least work of its streams (below_floor), below a best-practice design "
                                   "(below_model), up to the scenario's design plus a margin (within_model), or "
                                   "above (above_model); no feasible design to compare with (no_model_design, "
                                   "with the binding limits), or heat no warmer than the feed (invalid). Without "
                                   "--technology, judges the scenario's [claim] tables. Heat is valued by its "
                                   "exergy at its temperature.")
    _scenario_arguments(c, many=False)
    c.add_argument("--technology", metavar="T", help="the technology claimed (ro, med, fo)")
    c.add_argument("--electricity", metavar="Q", help='electricity per m3 of product, e.g. "3.5 kWh/m^3"')
    c.add_argument("--heat", metavar="Q", help='heat per m3 of product, e.g. "60 kWh/m^3" (needs --heat-temperature)')
    c.add_argument("--heat-temperature", metavar="Q", help='temperature of that heat, e.g. "70 degC"')
    c.add_argument("--recovery", metavar="R", help="mass recovery of the claim (default: the scenario design's)")
    c.add_argument("--scope", default="plant", metavar="plant|process",
                   help="plant: whole plant (intake, pre- and post-treatment included; default); process: the "
                        "separation step alone")
    c.set_defaults(func=cmd_claim)


# ------------------------------------------------------------------------------------------------------ parser
def _scenario_arguments(p: argparse.ArgumentParser, many: bool = True) -> None:
    """The arguments every command that reads scenario files takes."""
    if many:
        p.add_argument("scenario", nargs="+", metavar="SCENARIO", help="scenario TOML file(s)")
    else:
        p.add_argument("scenario", metavar="SCENARIO", help="scenario TOML file")
    p.add_argument("--set", action="append", metavar="K=V",
                   help='override a scenario key, e.g. --set ro.recovery=0.5 (repeatable)')
    p.add_argument("--format", choices=FORMATS, default="table", help="output format (default table)")


def _save_arguments(p: argparse.ArgumentParser, plot_help: str) -> None:
    """The arguments of the commands that save a run folder."""
    p.add_argument("--out", metavar="DIR", help="folder under which the run folder is created (default results/)")
    p.add_argument("--no-save", action="store_true", help="print only; write no files")
    p.add_argument("--plot", action="store_true", help=plot_help)


def _check_save_arguments(args) -> None:
    """Refuse contradictory saving options, an --out that cannot take a run folder, and --plot without matplotlib,
    before any work is done; ``args.parent`` is then the checked folder (None with --no-save)."""
    from .present.files import check_parent

    if args.out is not None and args.no_save:
        raise InputError("--out and --no-save: expected one of them, got both")
    args.parent = None if args.no_save else check_parent(args.out)
    if args.plot:
        if args.no_save:
            raise InputError("--plot: expected a run folder to write the plots into, got --no-save")
        from .present.plots import available
        available()


def build_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="desal", description="Desalination energy comparator: the thermodynamic floor and the energy, "
                                          "cost and emissions of RO, MED and FO for a site. Screening estimates.")
    p.add_argument("--version", action="version", version=f"desal {__version__}")
    p.add_argument("--debug", action="store_true", help="show the traceback of an unexpected failure")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    f = sub.add_parser("floor", help="least work of separation and osmotic pressure of a feed",
                       description="Least work of separation (from the feed's water activity), osmotic pressure and "
                                   "brine salinity for one feed at one or more mass recoveries.")
    f.add_argument("--salinity", required=True, help='feed salinity, e.g. "35 g/kg", "3.5 %%" or "36000 mg/L"')
    f.add_argument("--temperature", required=True, help='feed temperature, e.g. "25 degC" or "77 degF"')
    f.add_argument("--water", choices=("seawater", "nacl"), default="seawater",
                   help="kind of water (default seawater)")
    f.add_argument("--recovery", default="0.5",
                   help='mass recovery, product/feed (default 0.5); a list "0.3,0.5" or a range "0.3:0.7:5"')
    f.add_argument("--product-salinity", default="0 g/kg", help='product salinity (default "0 g/kg")')
    f.add_argument("--model", default=None,
                   help="water activity model (default: teos10 for seawater, pitzer-nacl for nacl); "
                        "see 'desal models'")
    f.add_argument("--format", choices=FORMATS, default="table", help="output format (default table)")
    f.add_argument("--strict", action="store_true", help="refuse values outside a model's validated range")
    f.set_defaults(func=cmd_floor)

    c = sub.add_parser("compare", help="compare every enabled technology for one or more scenario files",
                       description="Evaluate every enabled technology for each scenario on the same assumptions and "
                                   "print them side by side. Saves a new folder under results/ unless --no-save.")
    _scenario_arguments(c)
    _save_arguments(c, "also draw stacked bars of electricity, work equivalent of heat and the floor (PNG, SVG)")
    c.add_argument("--strict", action="store_true", help="refuse values outside a model's validated range")
    c.set_defaults(func=cmd_compare)

    w = sub.add_parser("sweep", help="grids or Monte Carlo samples of one scenario: summaries, rankings, break-even",
                       description="Evaluate one scenario over a grid of values (--vary, several give the Cartesian "
                                   "product) or over samples of its [uncertainty] section (--samples), in vectorised "
                                   "chunks. Prints percentiles per technology, the share of cases each ranks first "
                                   "on cost, energy and emissions, and where along a grid the first place changes. "
                                   "Saves summary.json, the cases (Parquet parts in cases/, or cases.csv) and plots "
                                   "into a new folder under results/ unless --no-save.")
    _scenario_arguments(w, many=False)
    w.add_argument("--vary", action="append", metavar="K=GRID",
                   help='a grid of one key: K=START:STOP:N (linear), K=START:STOP:N:log, or K=V1,V2,...; values with '
                        'units, e.g. --vary "energy.heat_price=0 USD/kWh:0.06 USD/kWh:13" (repeatable)')
    w.add_argument("--samples", type=int, metavar="N", help="N Monte Carlo samples of the [uncertainty] section")
    w.add_argument("--seed", type=int, default=20261201, help="seed of the random generator (default 20261201)")
    w.add_argument("--lhs", action="store_true", help="Latin hypercube sampling instead of plain random sampling")
    w.add_argument("--sensitivity", choices=("sobol", "tornado"),
                   help="with --samples: Sobol indices (first-order and total, 95 %% intervals; N a power of two, "
                        "N (d + 2) evaluations for d uncertain keys) or a tornado (each key at its p10 and p90, the "
                        "others at their medians) of cost, work equivalent and emissions")
    w.add_argument("--chunk", type=int, metavar="N", help="cases per vectorised chunk (default about 20000 "
                                                          "technology evaluations)")
    w.add_argument("--workers", type=int, metavar="N", help="evaluate chunks in N worker processes (same results)")
    w.add_argument("--scheduler", metavar="ADDRESS", help="evaluate chunks on a Dask cluster, e.g. tcp://host:8786 "
                                                          "(optional extra 'dask'; same results)")
    w.add_argument("--cases", choices=("parquet", "csv"), help="format of the saved cases: Parquet parts in cases/ "
                                                               "(default with pyarrow) or one cases.csv")
    _save_arguments(w, "draw the metrics against the grid, or their distributions (PNG, SVG into the run folder)")
    w.add_argument("--quiet", action="store_true", help="no progress bar")
    w.add_argument("--allow-large", action="store_true",
                   help="run a sweep beyond 10,000,000 technology evaluations (cases x technologies x periods); "
                        "without it such a sweep is refused with its estimated memory, disk and time")
    w.set_defaults(func=cmd_sweep)

    k = sub.add_parser("check", help="validate scenario files and print every resolved value with its source",
                       description="Validate scenario files and print the resolved scenario, each default with its "
                                   "source. Writes nothing.")
    _scenario_arguments(k)
    k.set_defaults(func=cmd_check)

    m = sub.add_parser("models", help="list property and technology models with validity and references",
                       description="List the property and technology models with their validity ranges and sources.")
    m.add_argument("--format", choices=FORMATS, default="table", help="output format (default table)")
    m.set_defaults(func=cmd_models)
    _report_parsers(sub)
    return p


#: error lines printed at most; the rest are counted
MAX_ERROR_LINES = 20

#: errno values of a write that fails for a reason outside the tool (full disk, read-only file system ...)
_WRITE_ERRNOS = ("ENOSPC", "EDQUOT", "EROFS", "EACCES", "EPERM", "ENOTDIR", "EISDIR", "ENAMETOOLONG", "EEXIST",
                 "ELOOP", "EFBIG")


class Terminated(BaseException):
    """SIGTERM, raised where the program stands so that open run folders are removed on the way out."""


def _on_sigterm(signum, frame):
    raise Terminated()


def _print_errors(lines) -> None:
    from .errors import printable

    lines = list(lines)
    for line in lines[:MAX_ERROR_LINES]:
        print(f"error: {printable(line)}", file=sys.stderr)
    if len(lines) > MAX_ERROR_LINES:
        rest = lines[MAX_ERROR_LINES:]
        where = {line.split(": ", 1)[0] for line in rest}     # the file (or option) they share, if one
        prefix = f"{printable(where.pop())}: " if len(where) == 1 and all(": " in x for x in rest) else ""
        print(f"error: {prefix}... and {len(rest)} more", file=sys.stderr)


def _quiet_stdout() -> None:
    """After a closed pipe (``desal check ... | head -1``): send what is left to /dev/null, so that the flush at exit
    neither fails nor complains."""
    import os
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError):
        pass


def main(argv: list[str] | None = None) -> int:
    """Entry point; returns the exit status."""
    import errno
    import signal
    import warnings

    argv = sys.argv[1:] if argv is None else list(argv)
    debug = "--debug" in argv
    previous = None
    try:
        previous = signal.signal(signal.SIGTERM, _on_sigterm)
    except ValueError:                 # not the main thread (a caller embedding main)
        pass
    try:
        with warnings.catch_warnings():
            if not debug:              # numerical warnings of masked, infeasible cases are not for the user
                warnings.simplefilter("ignore", RuntimeWarning)
            parser = build_parser()
            args = parser.parse_args(argv)
            if not getattr(args, "command", None):
                parser.print_help()
                return 2
            args.argv = argv
            code = int(args.func(args) or 0)
            sys.stdout.flush()
            return code
    except InputErrors as exc:
        _print_errors(exc.messages)
        return 2
    except InputError as exc:
        _print_errors([str(exc)])
        return 2
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130
    except Terminated:
        from .present.files import discard_open
        discard_open()                     # a run folder the signal caught before its command's cleanup
        print("terminated (SIGTERM): nothing saved", file=sys.stderr)
        return 143
    except SystemExit as exc:          # --help and --version
        return int(exc.code or 0)
    except BrokenPipeError:
        _quiet_stdout()
        return 0
    except OSError as exc:
        if exc.errno is not None and errno.errorcode.get(exc.errno) in _WRITE_ERRNOS and not debug:
            where = f" {exc.filename}" if exc.filename else ""
            _print_errors([f"cannot write{where}: {exc.strerror} (nothing saved)"])
            return 2
        if debug:
            raise
        _print_errors([f"unexpected failure: {type(exc).__name__}: {exc} (run again with --debug for the traceback)"])
        return 1
    except Exception as exc:  # the one boundary for the unexpected
        if debug:
            raise
        _print_errors([f"unexpected failure: {type(exc).__name__}: {exc} (run again with --debug for the traceback)"])
        return 1
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)
