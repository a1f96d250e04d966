"""One self-contained HTML report of a scenario: verdict, figures, pictures, clip, motor, cautions.

Images are embedded (base64 data URIs), styles are inline, and the page reflows
on a phone and prints cleanly. Every figure of the JSON outputs (``check``,
``size-motor``, and ``simulate`` when run) appears in the page's tables, with
its key path and unit as the row name.
"""

from __future__ import annotations

import base64
import html
import json
import math
from pathlib import Path

__all__ = ["report_page", "format_value", "flatten"]

_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;margin:0;color:#1d2733;
background:#f6f7f9;line-height:1.45}
main{max-width:980px;margin:0 auto;padding:16px}
h1{font-size:1.6em;margin:.3em 0}h2{font-size:1.2em;margin:1.4em 0 .4em;border-bottom:2px solid #d5dbe3}
.verdict{padding:12px 16px;border-radius:8px;font-weight:600;font-size:1.15em}
.ok{background:#dff3e4;color:#14532d}.bad{background:#fde2e1;color:#7f1d1d}
ul{padding-left:1.2em}table{border-collapse:collapse;width:100%;font-size:.92em;background:#fff;
table-layout:fixed}th{word-break:break-word;width:55%}
pre{white-space:pre-wrap;word-break:break-word;font-size:.85em;background:#fff;padding:8px}
td,th{border:1px solid #d5dbe3;padding:4px 8px;text-align:left;vertical-align:top}
td.v{font-family:ui-monospace,Menlo,Consolas,monospace;white-space:nowrap}
figure{margin:12px 0;background:#fff;padding:8px;border:1px solid #d5dbe3;border-radius:6px}
figure img{max-width:100%;height:auto;display:block;margin:0 auto}
figcaption{font-size:.9em;color:#475569;margin-top:6px}
.caution{background:#fff7e6;border-left:4px solid #d97706;padding:8px 12px}
@media (max-width:600px){main{padding:8px}td.v{white-space:normal;word-break:break-word}}
@media print{body{background:#fff}figure{break-inside:avoid}h2{break-after:avoid}
.verdict{border:1px solid #000}}
"""


def format_value(v) -> str:
    """Text of one figure as shown in the report (six significant digits for floats).

    Parameters
    ----------
    v : object
        A JSON value.

    Returns
    -------
    str
    """
    if v is None:
        return "none"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float):
        return f"{v:.6g}" if math.isfinite(v) else "none"
    if isinstance(v, (list, tuple)):
        return ", ".join(format_value(x) for x in v)
    return str(v)


def flatten(d: dict, prefix: str = "") -> list[tuple[str, object]]:
    """Leaf figures of a JSON dict as ``(dotted.key, value)``; lists of dicts are indexed.

    Parameters
    ----------
    d : dict
        JSON-ready data.
    prefix : str
        Key prefix.

    Returns
    -------
    list of (str, object)
    """
    rows: list[tuple[str, object]] = []
    for k, v in d.items():
        key = f"{prefix}{k}"
        if isinstance(v, dict):
            rows += flatten(v, key + ".")
        elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
            for i, x in enumerate(v):
                rows += flatten(x, f"{key}[{i}].")
        else:
            rows.append((key, v))
    return rows


def _table(d: dict, skip=("cautions", "reasons", "notes")) -> str:
    rows = [f"<tr><th>{html.escape(k)}</th><td class=v>{html.escape(format_value(v))}</td></tr>"
            for k, v in flatten(d) if k.split(".")[-1] not in skip]
    return "<table>" + "".join(rows) + "</table>"


def _img(path: Path, caption: str) -> str:
    mime = "image/gif" if path.suffix == ".gif" else "image/png"
    data = base64.b64encode(path.read_bytes()).decode("ascii")
    return (f'<figure><img alt="{html.escape(path.stem)}" src="data:{mime};base64,{data}">'
            f"<figcaption>{html.escape(caption)}</figcaption></figure>")


def report_page(sc, figures: dict, items) -> str:
    """The HTML page of a scenario's report.

    Parameters
    ----------
    sc : Scenario
        The scenario reported on.
    figures : dict
        JSON-ready figures: ``check``, ``size_motor`` and, when run, ``simulate``.
    items : list of (Path, str)
        The pictures (file and caption) to embed.

    Returns
    -------
    str
        One self-contained HTML document.
    """
    sim = figures.get("simulate")
    c = figures["check"]
    ok = bool(c.get("rollable"))
    parts = [
        "<!doctype html><html lang=en><head><meta charset=utf-8>",
        '<meta name=viewport content="width=device-width, initial-scale=1">',
        f"<title>ridesim report: {html.escape(sc.name)}</title><style>{_CSS}</style></head>",
        f"<body><main><h1>{html.escape(sc.name)}</h1>",
        f"<p>{html.escape(sc.description)}</p>" if sc.description else "",
        f'<div class="verdict {"ok" if ok else "bad"}">'
        + ("It rolls: no interference, and the surface supplies the friction."
           if ok else "It does not roll as designed.") + "</div>",
    ]
    if c.get("reasons"):
        parts.append("<ul>" + "".join(f"<li>{html.escape(r)}</li>" for r in c["reasons"]) + "</ul>")
    if c.get("notes"):
        parts.append("<h2>Notes</h2><ul>"
                     + "".join(f"<li>{html.escape(r)}</li>" for r in c["notes"]) + "</ul>")
    parts.append("<h2>Pictures</h2>")
    for path, caption in items:
        if Path(path).exists():
            parts.append(_img(Path(path), caption))
    parts.append("<h2>Will it roll: figures (torque, speed and power per motor)</h2>" + _table(c))
    parts.append("<h2>Motor sizing (per motor: one per uncoupled driven axle, one per coupled"
                 " train)</h2>" + _table(figures["size_motor"]))
    if sim is not None:
        parts.append("<h2>Simulation</h2>" + _table(figures["simulate"]))
    cautions = []
    for block in figures.values():
        for text in block.get("cautions", []):
            if text not in cautions:
                cautions.append(text)
    parts.append("<h2>Cautions</h2><div class=caution><ul>"
                 + "".join(f"<li>{html.escape(t)}</li>" for t in cautions) + "</ul></div>")
    parts.append("<h2>Scenario</h2><pre>" + html.escape(json.dumps(sc.to_dict(), indent=1))
                 + "</pre></main></body></html>")
    return "\n".join(parts)
