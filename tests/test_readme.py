"""The README's command examples are what the commands print today (one truth, README included).

Each ``$ ridesim ...`` block is run and compared line by line; ``...`` marks the elided parts
(tools/readme_examples.py explains the rule). The example figures themselves are proved
elsewhere against closed forms; this test keeps the front door from drifting away from them.
"""

import importlib.util
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def test_readme_examples_match_the_commands(capsys):
    spec = importlib.util.spec_from_file_location("readme_examples", ROOT / "tools" / "readme_examples.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    rc = mod.main([])
    assert rc == 0, capsys.readouterr().err
