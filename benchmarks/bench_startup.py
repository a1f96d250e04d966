"""Start-up of the light commands against ``python -c "import ridesim"`` in the same run.

Each command runs as a fresh ``python3`` process from the repository root (so this
checkout's package is the one imported): ``import ridesim`` alone, then ``ridesim
--help``, ``solve``, ``export`` and ``check`` of the one-axle pull toy, and ``check``
of the one-axle wave-track sculpture ("check 2"). The commands
are alternated round by round (every command once per round, in a rotated order),
so load on a shared machine hits them alike; each figure is the median over the
rounds of the child's CPU time (user + system, from ``getrusage``) and of its wall
time. Byte-code is cached (in a private folder) as for an installed package.
Target: every light command within 1.5 times ``import ridesim``.

Usage: python3 benchmarks/bench_startup.py [--rounds N]
"""

from __future__ import annotations

import argparse
import os
import platform
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SCENARIO = "scenarios/ellipse_pull_toy.toml"  # one axle, smooth (elliptical) wheel
SCENARIO_2 = "scenarios/wave_track_sculpture.toml"  # one axle, wheel solved for a wave track
TARGET = 1.5


def commands(out: str) -> dict[str, list[str]]:
    py = sys.executable
    return {
        "import ridesim": [py, "-c", "import ridesim"],
        "ridesim --help": [py, "-m", "ridesim.cli", "--help"],
        "ridesim solve": [py, "-m", "ridesim.cli", "solve", SCENARIO],
        "ridesim export": [py, "-m", "ridesim.cli", "export", SCENARIO, "--out", out],
        "ridesim check": [py, "-m", "ridesim.cli", "check", SCENARIO],
        "ridesim check 2": [py, "-m", "ridesim.cli", "check", SCENARIO_2],
    }


def run_once(argv: list[str], env: dict[str, str]) -> tuple[float, float]:
    """CPU seconds (user + system) and wall seconds of one child process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    subprocess.run(argv, cwd=ROOT, env=env, check=True, stdout=subprocess.DEVNULL)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return cpu, wall


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rounds", type=int, default=9, help="rounds of every command (median reported)")
    args = ap.parse_args()
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()},"
          f" load average {os.getloadavg()[0]:.1f}")
    print(f"{args.rounds} rounds, commands alternated; medians of the child process's CPU and wall time")
    with tempfile.TemporaryDirectory() as tmp:
        cmds = commands(tmp)
        names = list(cmds)
        # Byte-code as an installed package has it: compiled once into a private cache (the
        # warm-up run), then loaded, whatever PYTHONDONTWRITEBYTECODE says in this shell.
        env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
        env["PYTHONPYCACHEPREFIX"] = str(Path(tmp) / "pycache")
        for name in names:  # warm the file cache and byte-code (not timed)
            run_once(cmds[name], env)
        times: dict[str, list[tuple[float, float]]] = {n: [] for n in names}
        for r in range(args.rounds):
            order = names[r % len(names):] + names[:r % len(names)]
            for name in order:
                times[name].append(run_once(cmds[name], env))
    med = {n: (statistics.median(c for c, _ in v), statistics.median(w for _, w in v))
           for n, v in times.items()}
    base_cpu, base_wall = med["import ridesim"]
    print()
    print(f"{'command':<18}{'CPU [s]':>9}{'wall [s]':>10}{'CPU ratio':>11}{'wall ratio':>12}")
    ok = True
    for name in names:
        cpu, wall = med[name]
        rc, rw = cpu / base_cpu, wall / base_wall
        flag = "" if name == "import ridesim" else ("  met" if rc <= TARGET else "  NOT met")
        ok &= name == "import ridesim" or rc <= TARGET
        print(f"{name:<18}{cpu:>9.3f}{wall:>10.3f}{rc:>10.2f}x{rw:>11.2f}x{flag}")
    print()
    print(f"target: every light command within {TARGET}x of `import ridesim` (CPU):"
          f" {'met' if ok else 'NOT met'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
