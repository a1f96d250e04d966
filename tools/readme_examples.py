"""Check (or rewrite) the README's command examples against what the commands print today.

Each fenced block whose first line is ``$ ridesim ...`` is run from the project root. A README
line must equal the output line it stands for, except that a line ending in ``...`` stands for
any line starting with the text before the dots, and a line that is only ``...`` (indented or
not) stands for any number of lines.
Usage: ``python3 tools/readme_examples.py [--show]`` (exit 1 when a block differs; ``--show``
prints today's output of each block that differs, to paste from).
"""

from __future__ import annotations

import os
import re
import shlex
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
# numpy picks its sine, cosine and exponential kernels by the processor's vector units; the
# AVX-512 kernels round differently in the last bit from the AVX2 ones, and the contact solver
# carries that into simulated figures (the demo trolley's bounce reads 0.094 mm with the AVX2
# kernels, 0.083 mm with AVX-512; measured). The examples are the AVX2 kernels' output on any
# machine (names for numpy 2.4 and for earlier releases; names a release does not know are
# ignored).
AVX2_KERNELS = "X86_V4 AVX512_ICL AVX512_SPR AVX512F AVX512CD AVX512_SKX AVX512_CLX AVX512_CNL"
BLOCK = re.compile(r"```\n(\$ ridesim [^\n]*)\n(.*?)```", re.S)


def run(cmd: str) -> list[str]:
    """What ``cmd`` prints, run in a scratch folder that sees the project's scenarios.

    The scratch folder keeps an example's ``--out`` away from the project while the paths it
    prints stay the README's.
    """
    argv = shlex.split(cmd[2:])
    with tempfile.TemporaryDirectory() as tmp:
        (Path(tmp) / "scenarios").symlink_to(ROOT / "scenarios")
        env = {**os.environ, "NPY_DISABLE_CPU_FEATURES": AVX2_KERNELS,
               "PYTHONPATH": str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", "")}
        out = subprocess.run([sys.executable, "-m", "ridesim", *argv[1:]], cwd=tmp, env=env,
                             capture_output=True, text=True, timeout=600)
    return out.stdout.rstrip("\n").splitlines()


def match(shown: list[str], actual: list[str]) -> bool:
    """True when the README lines stand for today's output (see the module notes)."""
    j = 0
    for i, line in enumerate(shown):
        nxt = shown[i + 1] if i + 1 < len(shown) else None
        if line.strip() != "...":
            if j >= len(actual) or not _same(line, actual[j]):
                return False
            j += 1
            if not line.endswith("..."):
                continue
        # An elision: skip lines until the next README line matches (or to the end).
        while j < len(actual) and (nxt is None or not _same(nxt, actual[j])):
            j += 1
    return j == len(actual)


def _same(shown: str, actual: str) -> bool:
    if shown.strip() == "...":
        return True
    if shown.endswith("..."):
        return actual.startswith(shown[:-3].rstrip())
    return shown == actual


def main(argv: list[str]) -> int:
    """Check every example block; print the ones that differ (and, with ``--show``, today's text)."""
    show = "--show" in argv
    text = (ROOT / "README.md").read_text()
    bad = 0
    for m in BLOCK.finditer(text):
        cmd, body = m.group(1), m.group(2).rstrip("\n").splitlines()
        actual = run(cmd)
        if not match(body, actual):
            bad += 1
            print(f"README example differs from today's output: {cmd}", file=sys.stderr)
            if show:
                print("\n".join(actual), file=sys.stderr)
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
