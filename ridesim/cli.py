"""Command line: a thin shell over the Python API.

``ridesim COMMAND SCENARIO.toml [--json] [--out DIR]``. Exit codes: 0 ran
(whatever the verdict), 2 bad input (one line on stderr naming the field and
the fix), 1 internal error. With ``--json`` standard output is exactly one
JSON object. A value outside the range of real builds (the key table,
``ridesim/scenario/schema.py``) is accepted with one ``warning:`` line each on
stderr, and listed in the JSON output's ``warnings``.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from collections.abc import Callable
from pathlib import Path
from typing import NoReturn

from ridesim._version import __version__
from ridesim.errors import RidesimError
from ridesim.errors import ScenarioError as ScenarioError_

__all__ = ["main"]


class _ArgumentError(Exception):
    """Bad command-line usage (exit code 2)."""


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:  # one line, exit code 2, no usage dump
        raise _ArgumentError(f"{self.prog}: {message}")


# ---------------------------------------------------------------------------- commands
def _cmd_solve(sc, args) -> tuple[dict, str]:
    from ridesim.jobs.solve import solve_text, solve_with_wheelbases

    out = solve_with_wheelbases(sc, wheelbase_range_m=getattr(args, "wheelbase_range", None))
    return out, solve_text(sc, out)


def _cmd_check(sc, args) -> tuple[dict, str]:
    from ridesim.jobs.check import check_scenario

    res = check_scenario(sc)
    return res.to_dict(), _text_of(res)


def _cmd_simulate(sc, args) -> tuple[dict, str]:
    if sc.path.is_hub:
        from ridesim.jobs.hub import simulate_hub

        hub_res = simulate_hub(sc)
        return hub_res.to_dict(), hub_res.to_text()
    from ridesim.jobs.simulate import simulate, write_probes

    progress = None
    if not args.json and sys.stderr.isatty():
        progress = _progress_bar("simulating")
    res = simulate(sc, progress=progress, refine_on_creep=args.auto_step)
    if progress is not None:
        progress(1.0)
        sys.stderr.write("\n")
    if args.out:
        Path(args.out).mkdir(parents=True, exist_ok=True)
        write_probes(res, Path(args.out) / "probes.csv")
    return res.to_dict(), _text_of(res)


def _cmd_size_motor(sc, args) -> tuple[dict, str]:
    from ridesim.jobs.size_motor import size_motor

    res = size_motor(sc)
    return res.to_dict(), res.to_text()


def _check_out(out: str) -> None:
    """Refuse an ``--out`` that cannot become a writable folder, before any work or write.

    The folder itself is not created here (a later bad-input error must leave nothing
    behind); its nearest existing ancestor must be a folder we may write into.
    """
    path = Path(out)
    if path.exists() and not path.is_dir():
        raise ScenarioError_(f"--out {out} is an existing file, not a folder; give a folder"
                             " path (created if missing) or move the file away")
    probe = path
    while not probe.exists():
        if probe.parent == probe:
            break
        probe = probe.parent
    if not probe.is_dir():
        raise ScenarioError_(f"--out {out} cannot be created: {probe} is a file, not a folder;"
                             " give a folder path outside it")
    if not os.access(probe, os.W_OK | os.X_OK):
        what = "is not writable" if probe == path else f"cannot be created: {probe} is not writable"
        raise ScenarioError_(f"--out {out} {what}; choose a folder you may write into")


def _need_out(args, what: str) -> Path:
    if not args.out:
        raise ScenarioError_(f"ridesim {what} needs --out DIR (the folder to write into)")
    return Path(args.out)


MAX_CLIP_FRAMES = 3000
"""Most frames a clip may hold (2 minutes at 25 frames per second)."""


def _cmd_render(sc, args) -> tuple[dict, str]:
    from ridesim.jobs.render import render_scenario

    out = _need_out(args, "render")
    progress = None
    if not args.json and sys.stderr.isatty():
        progress = _progress_bar("drawing the clip")
    try:
        w, h = (int(v) for v in args.size.lower().split("x"))
    except ValueError:
        raise ScenarioError_(f"--size must be WIDTHxHEIGHT in pixels, e.g. 640x360, got"
                             f" {args.size!r}") from None
    if not (args.seconds > 0 and args.fps > 0):
        raise ScenarioError_(f"--seconds and --fps must be > 0, got {args.seconds} and {args.fps}")
    frames = args.seconds * args.fps
    if not args.no_clip and frames > MAX_CLIP_FRAMES:
        raise ScenarioError_(f"--seconds {args.seconds:g} at --fps {args.fps:g} is {frames:.3g}"
                             f" frames, beyond the budget of {MAX_CLIP_FRAMES}; shorten the clip"
                             " or lower the frame rate")
    if not (16 <= w <= 4096 and 16 <= h <= 4096):
        raise ScenarioError_(f"--size must be 16 to 4096 pixels each way, got {w}x{h}")
    items = render_scenario(sc, out, svg=args.svg, simulate=args.simulate, clip=not args.no_clip,
                            clip_s=args.seconds, fps=args.fps, size=(w, h),
                            follow=not args.fixed_camera, progress=progress)
    if progress is not None:
        sys.stderr.write("\n")
    data = {"files": [{"path": str(p), "caption": c} for p, c in items],
            "index": str(out / "index.md")}
    text = "\n".join(f"{p}: {c}" for p, c in items)
    return data, text


def _cmd_export(sc, args) -> tuple[dict, str]:
    from ridesim.jobs.export import export_scenario

    out = _need_out(args, "export")
    data = export_scenario(sc, out, section_m=args.section)
    return data, "\n".join(data["files"] + data["notes"])


def _cmd_report(sc, args) -> tuple[dict, str]:
    from ridesim.jobs.report import write_report

    out = _need_out(args, "report")
    progress = None
    if not args.json and sys.stderr.isatty():
        progress = _progress_bar("drawing the clip")
    page, figures = write_report(sc, out, simulate=not args.no_simulate, progress=progress)
    if progress is not None:
        sys.stderr.write("\n")
    return {"report": str(page), **figures}, f"report written: {page}"


def _cmd_new(args) -> int:
    from ridesim.export.results import write_text_atomic
    from ridesim.scenario.template import scenario_template

    name = args.name.strip()
    if not name or Path(name).name != name or name.endswith(".toml"):
        raise ScenarioError_(f"NAME must be a plain name without a folder or .toml, got {args.name!r}")
    text = scenario_template(name, wheel=args.wheel, track=args.track, hub=args.hub,
                             ratio=args.ratio)
    path = Path(args.out or ".") / f"{name}.toml"
    if path.exists():
        raise ScenarioError_(f"{path} already exists; choose another NAME or remove it")
    write_text_atomic(path, text)
    if args.json:
        sys.stdout.write(json.dumps({"scenario": str(path)}) + "\n")
    else:
        print(f"wrote {path}: edit it, then run ridesim check {path}")
    return 0


def _text_of(res) -> str:
    """A result's own words (every job result has ``to_text``)."""
    return res.to_text()


def _cmd_sweep(args) -> int:
    from ridesim.jobs.sweep.plan import load_sweep
    from ridesim.jobs.sweep.run import run_sweep
    from ridesim.jobs.sweep.summary import best_cases, plot_metric, read_table

    plan = load_sweep(args.scenario)
    warnings = _sweep_warnings(plan)
    for line in warnings:
        print(f"warning: {line}", file=sys.stderr)
    show = sys.stderr.isatty()

    def progress(done: int, failed: int, total: int) -> None:
        if show:
            sys.stderr.write(f"\rsweep: {done}/{total} done, {failed} failed,"
                             f" {total - done} remaining   ")
            sys.stderr.flush()

    outcome = run_sweep(plan, args.out, workers=args.workers, cluster=args.cluster,
                        progress=progress)
    if show:
        sys.stderr.write("\n")
    for line in outcome.warnings:  # journal lines skipped, by number
        print(f"warning: {line}", file=sys.stderr)
    warnings = warnings + list(outcome.warnings)
    rows = read_table(outcome.table)
    summary: dict[str, object] = {"cases": outcome.total, "done": outcome.done, "failed": outcome.failed,
               "computed_now": outcome.computed, "table": str(outcome.table),
               "interrupted": outcome.interrupted, "warnings": warnings}
    best: list[dict[str, object]] = []
    if args.best:
        best = [{"case": int(r["case"]), args.best: r[args.best], **{c: r[c] for c in plan.columns}}
                for r in best_cases(rows, args.best, highest=args.highest)]
        summary["best"] = best
    if args.plot:
        params = list(plan.columns[:2]) if not args.against else args.against.split(",")
        if not params:
            raise ScenarioError_("--plot needs varied parameters in the sweep")
        summary["plot"] = str(plot_metric(rows, args.plot, params,
                                          Path(args.out) / f"sweep_{args.plot}.png"))
    if args.json:
        sys.stdout.write(json.dumps(summary) + "\n")
    else:
        print(f"sweep {plan.source}: {outcome.done}/{outcome.total} cases done"
              f" ({outcome.failed} failed, {outcome.computed} computed now) -> {outcome.table}")
        for b in best:
            print("  best: " + ", ".join(f"{k} = {v}" for k, v in b.items()))
        if "plot" in summary:
            print(f"  plot: {summary['plot']}")
    return 130 if outcome.interrupted and outcome.done < outcome.total else 0


def _cmd_design(args) -> int:
    from ridesim.jobs.design import load_brief, run_design

    brief = load_brief(args.scenario)  # every bad key, range or path: exit 2 before any run
    warnings = [*brief.base.warnings, *brief.warnings]
    for line in warnings:
        print(f"warning: {line}", file=sys.stderr)
    show = sys.stderr.isatty() and not args.json

    def progress(evaluated: int, computed: int) -> None:
        if show:
            sys.stderr.write(f"\rdesign: {evaluated} designs evaluated ({computed} computed)   ")
            sys.stderr.flush()

    res = run_design(brief, args.out, workers=args.workers, cluster=args.cluster,
                     progress=progress)
    if show:
        sys.stderr.write("\n")
    if args.json:
        sys.stdout.write(json.dumps({**res.to_dict(), "warnings": warnings}) + "\n")
    else:
        print(res.to_text())
    return 130 if res.interrupted else 0


def _sweep_warnings(plan) -> list[str]:
    """Plausibility warnings of a sweep: the base's unvaried keys, then one line per varied key."""
    from ridesim.scenario.schema import KEYS, value_warnings

    lines: list[str] = list(getattr(plan, "warnings", ()))
    for k in KEYS:
        spec = getattr(plan.base, k.section)
        if k.path not in plan.columns and spec is not None:
            lines += value_warnings(k.path, getattr(spec, k.name, None))
    for col in plan.columns:
        hits = [w for case in plan.cases for w in value_warnings(col, case.values.get(col))[:1]]
        if hits:
            lines.append(f"{hits[0]} (in {len(hits)} of {len(plan.cases)} cases)")
    return lines


def _progress_bar(label: str) -> Callable[[float], None]:
    state = {"last": -1}

    def show(frac: float) -> None:
        pct = int(100 * min(max(frac, 0.0), 1.0))
        if pct == state["last"]:
            return
        state["last"] = pct
        bar = "#" * (pct // 4) + "-" * (25 - pct // 4)
        sys.stderr.write(f"\r{label} [{bar}] {pct:3d}%")
        sys.stderr.flush()

    return show


_COMMANDS: dict[str, tuple[Callable, str]] = {
    "solve": (_cmd_solve, "solve the track for the wheel (or the wheel for the track)"),
    "check": (_cmd_check, "will it roll? clearance, friction demand and shaft torque"),
    "simulate": (_cmd_simulate, "rigid-body simulation: bounce, slip onset, torque"),
    "size-motor": (_cmd_size_motor, "motor torque, speed and power over a duty cycle"),
    "render": (_cmd_render, "plots (PNG, SVG on request) and a GIF clip into --out DIR"),
    "export": (_cmd_export, "1:1 SVG, CSV and DXF cut files of the wheel and track, and a cut list,"
                            " into --out DIR"),
    "report": (_cmd_report, "one self-contained HTML page: verdict, figures, pictures, cautions"),
}


def _available() -> dict[str, tuple[Callable, str]]:
    """Commands whose layer is installed (the CLI lists only what works).

    The modules are looked for, not imported: ``importlib.util.find_spec`` of a
    submodule would import its package (and a package's ``__init__`` may import a whole layer),
    which would make ``--help`` as slow as ``check``.
    """
    from importlib.machinery import PathFinder

    here = [str(Path(__file__).resolve().parent)]
    need = {"check": ("jobs", "check"), "simulate": ("jobs", "simulate")}
    out = {}
    for name, entry in _COMMANDS.items():
        mod = need.get(name)
        if mod is not None:
            pkg = PathFinder.find_spec(mod[0], here)
            if pkg is None or PathFinder.find_spec(mod[1], pkg.submodule_search_locations) is None:
                continue
        out[name] = entry
    return out


def _build_parser(commands: dict) -> _Parser:
    p = _Parser(prog="ridesim", description="Non-circular wheels and their tracks: solve, check,"
                " simulate. Units are SI throughout.")
    p.add_argument("--version", action="version", version=f"ridesim {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True
    for name, (_, helptext) in commands.items():
        sp = sub.add_parser(name, help=helptext, description=helptext)
        sp.add_argument("scenario", metavar="SCENARIO.toml", help="scenario file")
        sp.add_argument("--json", action="store_true", help="print exactly one JSON object")
        sp.add_argument("--out", metavar="DIR", help="also write results into DIR")
        if name == "render":
            sp.add_argument("--svg", action="store_true", help="also write SVG copies of the plots")
            sp.add_argument("--simulate", action="store_true",
                            help="run the simulation: torque, bounce, comfort plots; the clip"
                            " replays it (default: the ideal kinematics)")
            sp.add_argument("--no-clip", action="store_true", help="skip the GIF clip")
            sp.add_argument("--seconds", type=float, default=4.0, help="clip length [s]")
            sp.add_argument("--fps", type=int, default=25, help="clip frames per second")
            sp.add_argument("--size", default="640x360", help="clip size WIDTHxHEIGHT [px]")
            sp.add_argument("--fixed-camera", action="store_true", help="do not follow the cart")
        if name == "simulate":
            sp.add_argument("--auto-step", action="store_true",
                            help="if the run creeps, rerun it once at a fifth of run.timestep_s")
        if name == "report":
            sp.add_argument("--no-simulate", action="store_true",
                            help="leave the rigid-body simulation out (faster)")
        if name == "solve":
            sp.add_argument("--wheelbase-range", nargs=2, type=float, metavar=("MIN", "MAX"),
                            help="list the whole-period wheelbases from MIN to MAX [m] (default:"
                            " one to five wheel diameters)")
        if name == "export":
            sp.add_argument("--section", type=float, default=None,
                            help="longest track section to cut [m] (default: [export] section_length_m)")
    nw = sub.add_parser("new", help="write a commented scenario NAME.toml with every key",
                        description="Write NAME.toml: a scenario with the keys its shape needs set to"
                        " an example and every other key commented out, each with its unit, default"
                        " and range.")
    nw.add_argument("name", metavar="NAME", help="scenario name (the file is NAME.toml)")
    nw.add_argument("--wheel", metavar="SHAPE", default=None,
                    help="wheel shape: polygon | ellipse | circle | polar | harmonic | outline"
                    " (default polygon)")
    nw.add_argument("--track", metavar="SHAPE", default=None,
                    help="track shape instead: wave | sawtooth | formula | points")
    nw.add_argument("--hub", metavar="SHAPE", default=None,
                    help="hub shape instead (a hub path, the wheel solved for the hub): polygon |"
                    " ellipse | circle | polar | outline")
    nw.add_argument("--ratio", action="store_true",
                    help="a gear pair designed for a required speed ratio instead ([ratio])")
    nw.add_argument("--out", metavar="DIR", help="folder for the file (default: here)")
    nw.add_argument("--json", action="store_true", help="print exactly one JSON object")
    sw = sub.add_parser("sweep", help="run a design sweep or tolerance study (resumable)",
                        description="Run every case of a sweep file; rerun the same command to"
                        " resume an interrupted sweep.")
    sw.add_argument("scenario", metavar="SWEEP.toml", help="sweep file")
    sw.add_argument("--out", metavar="DIR", required=True, help="results folder")
    sw.add_argument("--workers", type=int, default=None, help="local processes (default: cores)")
    sw.add_argument("--cluster", metavar="ADDRESS", default=None,
                    help="'local' for a Dask LocalCluster, or a scheduler address")
    sw.add_argument("--best", metavar="METRIC", help="list the cases with the lowest METRIC")
    sw.add_argument("--highest", action="store_true", help="with --best: rank from the highest")
    sw.add_argument("--plot", metavar="METRIC", help="plot METRIC against the varied parameters")
    sw.add_argument("--against", metavar="KEYS", help="comma-separated parameters for --plot")
    sw.add_argument("--json", action="store_true", help="print exactly one JSON object")
    de = sub.add_parser("design", help="search for the designs that meet a brief (resumable)",
                        description="Search the brief's varied keys for the designs that meet its"
                        " requirements, best goal first; rerun with the same --out to resume.")
    de.add_argument("scenario", metavar="BRIEF.toml", help="design brief")
    de.add_argument("--json", action="store_true", help="print exactly one JSON object")
    de.add_argument("--out", metavar="DIR", help="write best.toml, the ranked designs and the"
                    " journal into DIR")
    de.add_argument("--workers", type=int, default=None, help="local processes (default: cores)")
    de.add_argument("--cluster", metavar="ADDRESS", default=None,
                    help="'local' for a Dask LocalCluster, or a scheduler address")
    return p


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit code.

    Parameters
    ----------
    argv : list of str, optional
        Arguments without the program name; default ``sys.argv[1:]``.

    Returns
    -------
    int
        0 ran, 2 bad input, 1 internal error.
    """
    commands = _available()
    try:
        args = _build_parser(commands).parse_args(argv)
    except _ArgumentError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 2
    except SystemExit as exc:  # --help / --version
        return int(exc.code or 0)
    try:
        from ridesim.jobs import run_into
        from ridesim.scenario.load import load_scenario

        if args.out:
            _check_out(args.out)
        if args.command == "sweep":
            return _cmd_sweep(args)
        if args.command == "design":
            return _cmd_design(args)
        if args.command == "new":
            return _cmd_new(args)
        sc = load_scenario(args.scenario)
        for line in sc.warnings:  # valid but outside real builds: most likely a unit slip
            print(f"warning: {line}", file=sys.stderr)
        if sc.path.is_hub:  # the hub jobs' module is imported only for a hub path
            from ridesim.jobs.hub import require_line

            require_line(sc, args.command)
        fn = commands[args.command][0]
        data, text, trouble = run_into(
            args.command, sc, args.out,
            lambda folder: fn(sc, argparse.Namespace(**{**vars(args), "out": folder})))
        for line in trouble:
            print(f"warning: {line}", file=sys.stderr)
        if args.json:
            sys.stdout.write(json.dumps(data) + "\n")
        else:
            print(text)
        return 0
    except RidesimError as exc:
        print(f"error: {' '.join(str(exc).split())}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # output piped into a reader that stopped early (e.g. head)
        try:
            sys.stdout = open(os.devnull, "w")  # noqa: SIM115 - silence the flush at exit
        except OSError:
            pass
        return 0
    except Exception as exc:  # pragma: no cover - the last line of defence
        if os.environ.get("RIDESIM_DEBUG"):
            raise
        print(f"internal error: {type(exc).__name__}: {exc} (set RIDESIM_DEBUG=1 for a traceback;"
              " please report it)", file=sys.stderr)
        return 1


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
