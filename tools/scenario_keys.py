"""Print the scenario key reference (docs/scenario-keys.md) from the one key table.

Usage: ``python3 tools/scenario_keys.py > docs/scenario-keys.md`` (``tests/test_docs.py``
compares the committed file with this output).
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from ridesim.scenario.schema import markdown_reference  # noqa: E402

if __name__ == "__main__":
    sys.stdout.write(markdown_reference())
