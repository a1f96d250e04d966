"""One self-contained HTML report of a scenario, read top-down by a client and an engineer.

The page runs: the verdict and what it means; the build at a glance with a small drawing;
the pictures, each captioned with what to look for; motor sizing as tables per motor, by
phase and by gear ratio; ride comfort with its ISO 2631-1 band; findings and cautions
grouped for a reader; and an appendix with every figure of the JSON outputs (``check``,
``size_motor`` and, when run, ``simulate``) formatted with its unit and sensible digits
(:func:`format_figure`), then the scenario as its author wrote it (TOML).

Images are embedded (base64 data URIs), styles are inline, there is no script, and the
page reflows on a phone and prints on A4 or Letter with a page break before each section.
"""

from __future__ import annotations

import base64
import html
import math
from pathlib import Path

from ridesim.export.results import flatten
from ridesim.model.display import UNITS as _UNITS
from ridesim.model.display import _number, format_figure, unit_of

__all__ = ["report_page", "hub_report_page", "format_figure", "format_value", "unit_of", "axis_label",
           "LOOK_FOR"]

_CSS = """
*{box-sizing:border-box}
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;margin:0;color:#1d2733;
background:#f6f7f9;line-height:1.45}
main{max-width:980px;margin:0 auto;padding:16px}
h1{font-size:1.6em;margin:.3em 0 .1em}h2{font-size:1.25em;margin:1.6em 0 .5em;
border-bottom:2px solid #d5dbe3;padding-bottom:2px}h3{font-size:1.05em;margin:1em 0 .3em}
.lead{color:#475569;margin:.2em 0 .8em}
.verdict{padding:12px 16px;border-radius:8px;font-size:1.05em}
.verdict strong{font-size:1.2em;display:block;margin-bottom:2px}
.ok{background:#dff3e4;color:#14532d;border:1px solid #86c79a}
.bad{background:#fde2e1;color:#7f1d1d;border:1px solid #e7a3a0}
.keys{display:flex;flex-wrap:wrap;gap:8px;margin:10px 0 0;padding:0;list-style:none}
.keys li{background:#fff;border:1px solid #d5dbe3;border-radius:6px;padding:4px 10px;font-size:.92em}
.keys b{display:block;font-size:1.1em}
.glance{display:flex;gap:16px;align-items:flex-start;flex-wrap:wrap}
.glance table{flex:1 1 380px;width:auto}
.glance figure{flex:0 1 300px;margin:0}
ul{padding-left:1.2em}li{margin:.2em 0}
table{border-collapse:collapse;width:100%;font-size:.92em;background:#fff;margin:.3em 0 .8em}
td,th{border:1px solid #d5dbe3;padding:4px 8px;text-align:left;vertical-align:top}
thead th{background:#eef1f5}th{font-weight:600}
td.n,th.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
.app th{font-family:ui-monospace,Menlo,Consolas,monospace;font-weight:normal;word-break:break-all;
width:55%}
.app td{font-variant-numeric:tabular-nums}
tr.hit td{background:#fff3c4;font-weight:600}
pre{white-space:pre-wrap;word-break:break-word;font-size:.85em;background:#fff;padding:8px;
border:1px solid #d5dbe3}
code{font-family:ui-monospace,Menlo,Consolas,monospace;font-size:.92em;background:#eef1f5;
padding:0 3px;border-radius:3px}
figure{margin:12px 0;background:#fff;padding:8px;border:1px solid #d5dbe3;border-radius:6px}
figure img{max-width:min(100%,800px);height:auto;display:block;margin:0 auto}
figcaption{font-size:.9em;color:#475569;margin-top:6px}
figcaption b{color:#1d2733}
.caution{background:#fff7e6;border-left:4px solid #d97706;padding:6px 12px;margin:.4em 0}
.blocking{background:#fde2e1;border-left:4px solid #b8323a;padding:6px 12px;margin:.4em 0}
.watch{background:#eef4fb;border-left:4px solid #1f4e79;padding:6px 12px;margin:.4em 0}
.muted{color:#64748b;font-size:.9em}
@media (max-width:600px){main{padding:8px}.app th{width:50%}}
@page{margin:14mm}
@media print{body{background:#fff;font-size:10.5pt}main{max-width:none;padding:0}
section{break-before:page}section.first{break-before:auto}h2,h3{break-after:avoid}
figure,table,tr,.verdict,.caution,.blocking,.watch{break-inside:avoid}
figure img{max-height:120mm;width:auto}
.verdict{border:1px solid #000}}
"""

#: What to look for in each picture, by file stem (added after the picture's own caption).
LOOK_FOR = {
    "wheel": "The wheel's outline, its axle and centre of mass: a centre of mass off the axle"
             " makes the torque and the friction demand uneven.",
    "track": "The wheel in a few poses along the track: it should touch the track at one point"
             " and never cut into it; the axle (dashed) stays level on an ideal pair.",
    "roll": "The rolling contact: where the contact point sits on the wheel as it turns.",
    "friction": "The curve must stay below the surface's line everywhere; where it comes close,"
                " the wheel may slip (steep track near the cusps).",
    "torque_analytic": "Each motor's torque over one revolution at steady speed: its peak and"
                       " r.m.s. size the motor at cruise.",
    "torque": "Simulated torque (solid) should follow the analytic model (dashed); the shaded"
              " windows are left out of the figures.",
    "bounce": "The axles' height should stay within a fraction of a millimetre of the ideal"
              " line; a growing swing means the ride is drifting.",
    "seat": "What a rider's seat feels; marked points beyond the axis are single-step spikes of"
            " the contact solver, not the ride.",
    "comfort": "Where the vibration sits in frequency; the weighted bars count for comfort"
               " (ISO 2631-1 Wk peaks at 4-8 Hz).",
    "clip": "The build rolling at its drive speed: the axles should glide level over the track.",
}

def axis_label(key: str) -> tuple[str, float]:
    """A readable axis label for a figure's key and the factor to its reading unit.

    Parameters
    ----------
    key : str
        Key or column name with its SI unit suffix (``wheel.apothem_m``).

    Returns
    -------
    (str, float)
        Label such as ``"wheel apothem [mm]"`` and the factor to multiply values by.

    Examples
    --------
    >>> axis_label("wheel.apothem_m")
    ('wheel apothem [mm]', 1000.0)
    >>> axis_label("comfort.weighted_rms_m_s2")[0], axis_label("friction.required_peak")[0]
    ('comfort weighted rms [m/s²]', 'friction required peak')
    """
    unit, factor, _ = unit_of(key)
    name = key
    for suffix, u, _, _ in _UNITS:
        if u == unit and key.endswith(suffix):
            name = key[: -len(suffix)]
            break
    words = name.replace(".", " ").replace("_", " ").strip()
    return (f"{words} [{unit}]" if unit else words), factor


def format_value(v) -> str:
    """Text of one value without a key (four significant digits, fixed-point).

    Parameters
    ----------
    v : object
        A JSON value.

    Returns
    -------
    str
    """
    return format_figure("", v)


_SENTENCES = ("cautions", "reasons", "notes")


def _e(text) -> str:
    return html.escape(str(text))


def _words(text: str) -> str:
    """A sentence for the page: escaped, with `code` spans shown as code, not backticks."""
    parts = str(text).split("`")
    return "".join(f"<code>{_e(p)}</code>" if i % 2 else _e(p) for i, p in enumerate(parts))


def _appendix_table(block: str, d: dict) -> str:
    rows = []
    for key, v in flatten(d, lists="index").items():
        if key.split(".")[-1] in _SENTENCES:
            continue  # sentences are shown in the findings and cautions
        rows.append(f"<tr><th>{_e(key)}</th><td>{_e(format_figure(key, v))}</td></tr>")
    return f'<table class=app id="figures-{_e(block)}">' + "".join(rows) + "</table>"


def _grid(head: list[str], rows: list[list[str]], numeric_from: int = 1,
          numeric_to: int = 99) -> str:
    def cell(tag, i, text):
        cls = " class=n" if numeric_from <= i < numeric_to else ""
        return f"<{tag}{cls}>{_e(text)}</{tag}>"

    h = "".join(cell("th", i, t) for i, t in enumerate(head))
    b = "".join("<tr>" + "".join(cell("td", i, t) for i, t in enumerate(r)) + "</tr>" for r in rows)
    return f"<table><thead><tr>{h}</tr></thead><tbody>{b}</tbody></table>"


#: What to look for in a hub pair's pictures (by file stem), where it differs from a line's.
HUB_LOOK_FOR = {
    "clip": "The wheel rolling round its hub or ring: the outlines touch only at the contact and"
            " the arm sweeps on without jerks.",
    "hub_ratio": "The driven speed ratio's swing (the ripple a constant-speed driver passes on)"
                 " and where the contact radii peak.",
}


def _img(path: Path, caption: str, alt: str | None = None, look_for: dict | None = None) -> str:
    mime = "image/gif" if path.suffix == ".gif" else "image/png"
    data = base64.b64encode(path.read_bytes()).decode("ascii")
    look = (LOOK_FOR if look_for is None else look_for).get(path.stem)
    cap = _words(caption) + (f" <b>Look for:</b> {_e(look)}" if look else "")
    return (f'<figure><img alt="{_e(alt or path.stem)}" src="data:{mime};base64,{data}">'
            f"<figcaption>{cap}</figcaption></figure>")


def _verdict(sc, c: dict, sim: dict | None, sm: dict) -> str:
    ok = bool(c.get("rollable"))
    if ok:
        head = "It rolls as designed."
        means = ("The wheel clears the track all the way round and the surface supplies the"
                 " friction the contact needs, so the build can be made as specified. Read the"
                 " findings below for what to watch, and the cautions before building.")
    else:
        head = "It does not roll as designed."
        means = ("At least one check fails (listed below): change the design before building.")
    keys = []
    clr = (c.get("clearance") or {}).get("min_m")
    if clr is not None:
        keys.append(("least clearance", format_figure("min_m", clr)))
    fr = c.get("friction") or {}
    if fr.get("required_peak") is not None:
        keys.append(("friction needed / available",
                     f"{format_value(fr['required_peak'])} / {format_value(fr.get('available'))}"))
    if sm.get("peak_torque_Nm") is not None:
        keys.append(("peak torque per motor", format_figure("peak_torque_Nm", sm["peak_torque_Nm"])))
    if sm.get("best_ratio") is not None:
        keys.append(("gear ratio that fits", format_value(sm["best_ratio"])))
    comfort = (sim or {}).get("comfort") or {}
    if comfort.get("band"):
        keys.append(("ride comfort", comfort["band"]))
    items = "".join(f"<li>{_e(k)}<b>{_e(v)}</b></li>" for k, v in keys)
    reasons = "".join(f"<li>{_words(r)}</li>" for r in c.get("reasons") or [])
    return (f'<div class="verdict {"ok" if ok else "bad"}" id=verdict><strong>{head}</strong>'
            f"{_e(means)}" + (f"<ul>{reasons}</ul>" if reasons else "")
            + f"<ul class=keys>{items}</ul></div>")


def _build_rows(sc) -> list[list[str]]:
    d = sc.to_dict()
    w, v, dr, s = d.get("wheel", {}), d.get("vehicle", {}), d.get("drive", {}), d.get("surface", {})
    t = d.get("track", {})

    def fig(section: dict, key: str) -> str:
        return format_figure(key, section[key]) if section.get(key) is not None else ""

    def join(*parts):
        return ", ".join(p for p in parts if p)

    shape = str(w.get("shape", ""))
    wheel = join(shape + (f", {w['sides']} sides" if w.get("sides") else ""),
                 *(f"{k.rsplit('_', 1)[0].replace('_', ' ')} {fig(w, k)}"
                   for k in ("apothem_m", "radius_m", "semi_major_m", "semi_minor_m",
                             "thickness_m") if w.get(k) is not None),
                 f"density {fig(w, 'density_kg_m3')}" if w.get("density_kg_m3") else "")
    track = join(*(f"{k.replace('_', ' ')} {format_figure(k, x)}" for k, x in t.items()
                   if not isinstance(x, (dict, list))))
    vehicle = join(f"{v.get('axles')} axle(s)",
                   f"wheelbase {fig(v, 'wheelbase_m')}" if v.get("wheelbase_m") else "",
                   "coupled" if v.get("coupled") else "uncoupled",
                   f"body {fig(v, 'body_mass_kg')}" if v.get("body_mass_kg") is not None else "")
    drive = join(f"{dr.get('mode')} drive",
                 f"at {fig(dr, 'speed_m_s')}" if dr.get("speed_m_s") else "",
                 f"accelerating at {fig(dr, 'accel_m_s2')}" if dr.get("accel_m_s2") else "",
                 f"torque limit {fig(dr, 'max_torque_Nm')}" if dr.get("max_torque_Nm") else "")
    surface = join(f"friction {fig(s, 'friction')}" if s.get("friction") is not None else "",
                   f"rolling resistance {fig(s, 'rolling_resistance')}"
                   if s.get("rolling_resistance") else "")
    return [[k, x] for k, x in (("Wheel", wheel), ("Track", track or "shaped to fit the wheel"),
                                ("Vehicle", vehicle), ("Drive", drive), ("Surface", surface)) if x]


def _motor_section(c: dict, sm: dict, sim: dict | None) -> str:
    out = ["<h3>Per motor, over the duty cycle</h3>"]
    rows = [[m.get("name", f"motor {i}"), ", ".join(str(a) for a in m.get("axles", [])),
             format_figure("peak_torque_Nm", m.get("peak_torque_Nm")),
             format_figure("rms_torque_Nm", m.get("rms_torque_Nm")),
             format_figure("max_shaft_speed_rad_s", m.get("max_shaft_speed_rad_s")),
             format_figure("peak_power_W", m.get("peak_power_W")),
             format_figure("mean_power_W", m.get("mean_power_W"))]
            for i, m in enumerate(sm.get("motors") or [])]
    out.append(_grid(["motor", "axles", "peak torque", "r.m.s. torque", "top shaft speed",
                      "peak power", "mean power"], rows, numeric_from=2))
    phases = sm.get("by_phase") or {}
    if phases:
        out.append("<h3>By phase of the duty cycle (each motor)</h3>")
        covers = ((c.get("torque") or {}).get("by_phase") or {})
        rows = [[name, format_figure("window_s", p.get("window_s")),
                 format_figure("peak_Nm", p.get("peak_Nm")), format_figure("rms_Nm", p.get("rms_Nm")),
                 format_figure("mean_Nm", p.get("mean_Nm")),
                 format_figure("max_shaft_speed_rad_s", p.get("max_shaft_speed_rad_s")),
                 format_figure("peak_power_W", p.get("peak_power_W")),
                 (covers.get(name) or {}).get("covers", "")]
                for name, p in phases.items()]
        out.append(_grid(["phase", "window", "peak", "r.m.s.", "mean", "top shaft speed",
                          "peak power", "covers"], rows, numeric_from=1, numeric_to=7))
    tq = (sim or {}).get("torque") or {}
    if tq.get("motors"):
        out.append("<h3>Simulated, per motor and phase (10 ms average)</h3>")
        rows = []
        for m in tq["motors"]:
            for name, p in (m.get("by_phase") or {}).items():
                rows.append([m.get("name", ""), name,
                             format_figure("measured_s", p.get("measured_s")),
                             *(format_figure(k, p.get(k))
                               for k in ("peak_Nm", "rms_Nm", "mean_Nm", "peak_raw_Nm"))])
        out.append(_grid(["motor", "phase", "measured", "peak", "r.m.s.", "mean",
                          "peak (raw steps)"], rows, numeric_from=2))
    gears = sm.get("gears") or []
    if gears:
        best = sm.get("best_ratio")
        out.append("<h3>Against the motor given, by gear ratio</h3>")
        rows = [[format_value(g.get("ratio")),
                 format_figure("torque_Nm", g.get("motor_rms_torque_Nm")),
                 format_figure("torque_Nm", g.get("motor_peak_torque_Nm")),
                 format_figure("speed_rpm", g.get("motor_max_speed_rpm")),
                 "fits" + (" (best)" if g.get("ratio") == best else "") if g.get("fits")
                 else "exceeds " + ", ".join(g.get("limits") or [])] for g in gears]
        out.append(_grid(["gear ratio", "motor r.m.s. torque", "motor peak torque",
                          "motor top speed", "verdict"], rows, numeric_from=1))
    return "".join(out)


def _comfort_section(comfort: dict) -> str:
    from ridesim.metrics.comfort import COMFORT_REACTIONS

    if comfort.get("unavailable"):
        return f"<p>No comfort grade: {_words(comfort['unavailable'])}</p>"
    total = comfort.get("total_value_m_s2")
    band = comfort.get("band", "")
    z, x = comfort.get("weighted_rms_m_s2"), comfort.get("weighted_rms_horizontal_m_s2")
    out = [f"<p>A rider would find this ride <b>{_e(band)}</b>: vibration total value"
           f" {_e(format_figure('a_m_s2', total))} (vertical {_e(format_figure('a_m_s2', z))},"
           f" fore-aft {_e(format_figure('a_m_s2', x))},"
           " frequency-weighted r.m.s.); vibration dose value"
           f" {_e(format_figure('vdv_m_s175', comfort.get('vdv_m_s175')))}, crest factor"
           f" {_e(format_value(comfort.get('crest_factor')))}.</p>"]
    rows = []
    for lo, hi, text in COMFORT_REACTIONS:
        span = (f"less than {_number(hi, 3)}" if lo <= 0 else
                f"more than {_number(lo, 3)}" if not math.isfinite(hi) else
                f"{_number(lo, 3)} to {_number(hi, 3)}")
        hit = " class=hit" if text in band.split(" to ") else ""
        rows.append(f"<tr{hit}><td class=n>{span} m/s²</td><td>{_e(text)}</td></tr>")
    out.append("<table><thead><tr><th class=n>weighted r.m.s.</th><th>likely reaction"
               " (ISO 2631-1:1997 Annex C, informative)</th></tr></thead><tbody>"
               + "".join(rows) + "</tbody></table>")
    return "".join(out)


def _findings_section(figures: dict) -> str:
    from ridesim.safety import SAFETY_CAUTIONS

    c = figures["check"]
    blocking = list(c.get("reasons") or [])
    watch = list(c.get("notes") or [])
    sim = figures.get("simulate") or {}
    for text in sim.get("notes") or []:  # the simulation's findings, worded
        if text not in watch:
            watch.append(text)
    cautions: list[str] = []
    for block in figures.values():
        for text in block.get("cautions", []):
            if text not in cautions:
                cautions.append(text)
    safety = [t for t in cautions if t in SAFETY_CAUTIONS]
    limits = [t for t in cautions if t not in SAFETY_CAUTIONS]
    out = []
    if blocking:
        out.append("<h3>What stops it rolling</h3>"
                   + "".join(f"<div class=blocking>{_words(t)}</div>" for t in blocking))
    out.append("<h3>What to watch</h3>")
    out.append("".join(f"<div class=watch>{_words(t)}</div>" for t in watch)
               if watch else "<p class=muted>Nothing found beyond the cautions below.</p>")
    out.append("<h3>Safety</h3>" + "".join(f"<div class=caution>{_words(t)}</div>" for t in safety))
    if limits:
        out.append("<h3>Limits of these figures</h3><ul>"
                   + "".join(f"<li>{_words(t)}</li>" for t in limits) + "</ul>")
    return "".join(out)


def _as_written(sc) -> bool:
    """True when the scenario is exactly what its file loads to (not changed since)."""
    src = getattr(sc, "source", None)
    if src is None or not Path(src).is_file():
        return False
    try:
        from ridesim.scenario.load import load_scenario

        return load_scenario(src).to_dict() == sc.to_dict()
    except Exception:  # noqa: BLE001 -- a file that no longer loads is not the scenario shown
        return False


def scenario_toml(sc) -> str:
    """The scenario as TOML: its file's own text when it is exactly what the file loads to.

    A scenario changed after loading (a sweep case, ``Scenario.replace``) is written out
    from its values instead, so the page never shows a file that is not what was run.

    Parameters
    ----------
    sc : Scenario
        The scenario.

    Returns
    -------
    str
    """
    if _as_written(sc):
        return Path(sc.source).read_text(encoding="utf-8")
    from ridesim.scenario.toml_text import toml_text

    return toml_text(sc.to_dict())


def _page_head(sc, verdict: str) -> list[str]:
    """The page's opening: document head, title, description and the verdict box."""
    return [
        "<!doctype html><html lang=en><head><meta charset=utf-8>",
        '<meta name=viewport content="width=device-width, initial-scale=1">',
        f"<title>ridesim report: {_e(sc.name)}</title><style>{_CSS}</style></head>",
        f"<body><main><section class=first><h1>{_e(sc.name)}</h1>",
        f"<p class=lead>{_e(sc.description)}</p>" if sc.description else "",
        verdict,
    ]


def _page_tail(sc, figures: dict, blocks) -> list[str]:
    """The appendix of every figure of ``blocks`` (key, title) and the scenario as run."""
    parts = ["<section><h2>Appendix: every figure</h2><p class=muted>Key paths as in the"
             " JSON outputs; lengths in mm, angles in degrees, four significant digits and no"
             " finer than the unit's resolution.</p>"]
    for block, title in blocks:
        if block in figures:
            parts.append(f"<h3>{title}</h3>" + _appendix_table(block, figures[block]))
    src = getattr(sc, "source", None)
    if src is None:
        note = "As run, every key given."
    elif _as_written(sc):
        note = f"As written in {_e(Path(src).name)}."
    else:
        note = f"Changed from {_e(Path(src).name)}: as run, every key given."
    parts.append("<h3>The scenario</h3>" + f"<p class=muted>{note}</p>"
                 + "<pre>" + _e(scenario_toml(sc)) + "</pre></section></main></body></html>")
    return parts


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
    sm = figures["size_motor"]
    pics = [(Path(p), cap) for p, cap in items if Path(p).exists()]
    small = next((pc for pc in pics if pc[0].stem == "track"), None) or \
        next((pc for pc in pics if pc[0].stem == "wheel"), None)
    parts = [
        *_page_head(sc, _verdict(sc, c, sim, sm)),
        "<h2>The build at a glance</h2><div class=glance>",
        _grid(["part", "as specified"], _build_rows(sc), numeric_from=9),
    ]
    if small is not None:
        data = base64.b64encode(small[0].read_bytes()).decode("ascii")
        parts.append(f'<figure><img alt="drawing of the wheel on its track" '
                     f'src="data:image/png;base64,{data}"><figcaption>The wheel on its track'
                     " (details under Pictures).</figcaption></figure>")
    parts.append("</div></section>")
    parts.append("<section><h2>Pictures</h2>")
    for path, caption in pics:
        parts.append(_img(path, caption))
    parts.append("</section>")
    parts.append("<section><h2>Motor sizing</h2><p>Figures are per motor: one per uncoupled"
                 " driven axle, one per coupled train.</p>" + _motor_section(c, sm, sim)
                 + "</section>")
    if sim is not None:
        parts.append("<section><h2>Ride comfort</h2>" + _comfort_section(sim.get("comfort") or {})
                     + "</section>")
    parts.append("<section><h2>Findings and cautions</h2>" + _findings_section(figures)
                 + "</section>")
    parts += _page_tail(sc, figures, (("check", "Will it roll (check)"),
                                      ("size_motor", "Motor sizing"), ("simulate", "Simulation")))
    return "\n".join(parts)


def hub_report_page(sc, figures: dict, items) -> str:
    """The HTML page of a wheel rolling around a hub (or of a non-circular gear pair).

    The same page as :func:`report_page` where the figures are the same (the verdict, the
    pictures, findings and cautions, the appendix and the scenario as written); the build
    and the key figures are those of a hub pair: centre distance, ratio, least gap between
    the outlines, friction demand against the surface's, and the driven speed ratio.

    Parameters
    ----------
    sc : Scenario
        The scenario reported on (``path.kind = "hub"``).
    figures : dict
        JSON-ready figures: ``check`` and, when run, ``simulate``.
    items : list of (Path, str)
        The pictures (file and caption) to embed.

    Returns
    -------
    str
        One self-contained HTML document.
    """
    c = figures["check"]
    sim = figures.get("simulate")
    solve = c.get("solve") or {}
    ok = bool(c.get("rollable"))
    part = "ring" if sc.path.side == "inside" else "hub"
    head = "It rolls as designed." if ok else "It does not roll as designed."
    means = (f"The wheel and the {part} clear each other all the way round and the surface supplies"
             " the friction the contact needs. Read the findings below for what to watch, and the"
             " cautions before building." if ok else
             "At least one check fails (listed below): change the design before building.")
    keys = _hub_keys(c, figures.get("size_motor"), sim, part)
    reasons = "".join(f"<li>{_words(r)}</li>" for r in c.get("reasons") or [])
    verdict = (f'<div class="verdict {"ok" if ok else "bad"}" id=verdict><strong>{head}</strong>'
               f"{_e(means)}" + (f"<ul>{reasons}</ul>" if reasons else "")
               + "<ul class=keys>" + "".join(f"<li>{_e(k)}<b>{_e(v)}</b></li>" for k, v in keys)
               + "</ul></div>")
    d = sc.to_dict()
    w = d.get("wheel", {})
    e_txt = format_figure("centre_distance_m", solve.get("centre_distance_m"))
    as_built = {"scale": 1.0, "axle_error_m": [0.0, 0.0], "corner_radius_m": 0.0}

    def shown(k: str, v) -> str:
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            return f"{k.rsplit('_', 2)[0].replace('_', ' ')} {format_figure(k, v)}"
        if isinstance(v, (list, tuple)) and all(isinstance(x, (int, float)) for x in v):
            unit_key = k if k.endswith("_m") else ""
            return (f"{k.rsplit('_', 1)[0].replace('_', ' ')} ["
                    + ", ".join(format_figure(unit_key or "x", x) for x in v) + "]")
        return f"{k} {v}"

    rows = [["Wheel", ", ".join(shown(k, v) for k, v in w.items()
                                if not isinstance(v, dict) and as_built.get(k, None) != v)],
            ["Path", f"axle on a circle {'inside a ring' if part == 'ring' else 'around a hub'},"
                     f" centre distance {e_txt}"],
            ["Surface", f"friction {format_value(sc.surface.friction)}"]]
    # The given side, when it is not the wheel: the hub (or ring) outline, or the speed ratio.
    for key, label in (("hub", part.capitalize() + " (given; the wheel is solved for it)"),
                       ("ratio", "Speed ratio (given; both pitch curves are solved for it)")):
        given = d.get(key)
        if given:
            rows.insert(1, [label, ", ".join(shown(k, v) if not isinstance(v, str)
                                             else f"{k.replace('_', ' ')} {v}"
                                             for k, v in given.items() if not isinstance(v, dict))])
    fr = c.get("friction") or {}
    if fr:
        sm = figures.get("size_motor") or {}
        speed = sm.get("max_shaft_speed_rad_s")
        rows.append(["Loads", ("driver gear" if sm.get("view") == "gears" else "wheel shaft")
                     + (f" at {format_figure('max_shaft_speed_rad_s', speed)}" if speed is not None else "")
                     + ("; no brake" if not fr.get("load_torque_Nm") else
                        f"; brake {format_figure('load_torque_Nm', fr.get('load_torque_Nm'))} on the"
                        f" driven {'gear' if sm.get('view') == 'gears' else 'arm'}")
                     + f"; preload {format_value(fr.get('preload_N'))} N; "
                     + ("gravity in the plane (a vertical drum)" if fr.get("gravity_m_s2")
                        else "no gravity in the plane")])
    pics = [(Path(p), cap) for p, cap in items if Path(p).exists()]
    parts = [
        *_page_head(sc, verdict),
        "<h2>The build at a glance</h2>", _grid(["part", "as specified"], rows, numeric_from=9),
        "</section><section><h2>Pictures</h2>",
        *(_img(path, caption, look_for=HUB_LOOK_FOR) for path, caption in pics),
        "</section>",
    ]
    if figures.get("size_motor"):
        parts.append("<section><h2>Motor sizing</h2>" + _hub_motor_section(figures["size_motor"])
                     + "</section>")
    parts += ["<section><h2>Findings and cautions</h2>" + _findings_section(figures) + "</section>"]
    parts += _page_tail(sc, figures, (("check", "Will it roll (check)"), ("size_motor", "Motor sizing"),
                                      ("simulate", "Simulation")))
    return "\n".join(parts)


def _hub_keys(c: dict, sm: dict | None, sim: dict | None, part: str) -> list[tuple[str, str]]:
    """The key figures of a hub pair, from the check's and the motor sizing's own numbers."""
    solve = c.get("solve") or {}
    fr = c.get("friction") or {}
    keys = [("centre distance", format_figure("centre_distance_m", solve.get("centre_distance_m"))),
            ("wheel turns per " + part + " turn", format_value(solve.get("ratio")))]
    gap = c.get("least_gap_m")
    if gap is not None:
        keys.append(("interference" if c.get("interferes") else "least gap (0: touching at the contact)",
                     format_figure("least_gap_m", gap)))
    concave = [(what, c.get(f"{what}_concave_radius_m")) for what in ("wheel", part)]
    concave = [(w, r) for w, r in concave if r is not None and not (w == "ring")]
    keys.append(("undercut risk (concave pitch curve)",
                 "none: both convex" if not concave else
                 "; ".join(f"{w} radius {format_figure('radius_m', r)}" for w, r in concave)))
    if fr:
        peak = fr.get("required_peak")
        keys.append(("friction needed / available",
                     f"{'contact lost' if peak is None else format_value(peak)} /"
                     f" {format_value(c.get('friction_available'))}"))
    if c.get("speed_ripple") is not None:
        keys.append(("driven speed ratio", f"{format_value(c.get('speed_ratio_min'))} .."
                                           f" {format_value(c.get('speed_ratio_max'))} (ripple"
                                           f" {format_value(100 * c['speed_ripple'])} %)"))
    for m in (sm or {}).get("motors", []):
        keys.append((f"motor: {m['name']}",
                     f"{format_figure('peak_torque_Nm', m['peak_torque_Nm'])} peak,"
                     f" {format_figure('max_shaft_speed_rad_s', m['max_shaft_speed_rad_s'])},"
                     f" {format_figure('peak_power_W', m['peak_power_W'])} peak"))
    if sim is not None and sim.get("speed_ratio_error_max") is not None:
        keys.append(("simulated ratio error", f"{100 * sim['speed_ratio_error_max']:.2f} %"))
    return keys


def _hub_motor_section(sm: dict) -> str:
    """Each motor's figures at a steady speed (a carousel's two drives are alternatives)."""
    lead = ("<p>Two ways to drive the carousel, one motor each (alternatives, not both):"
            " figures per motor at a steady speed.</p>" if sm.get("alternatives") else
            "<p>The driver gear's motor at a steady speed.</p>")
    rows = [[m["name"], format_figure("peak_torque_Nm", m["peak_torque_Nm"]),
             format_figure("rms_torque_Nm", m["rms_torque_Nm"]),
             "0 N·m" if m["mean_torque_Nm"] == 0 else format_figure("mean_torque_Nm", m["mean_torque_Nm"]),
             format_figure("max_shaft_speed_rad_s", m["max_shaft_speed_rad_s"])
             + f" ({format_value(m['max_shaft_speed_rpm'])} rpm)",
             format_figure("peak_power_W", m["peak_power_W"]),
             format_figure("mean_power_W", m["mean_power_W"])]
            for m in sm.get("motors", [])]
    return lead + _grid(["motor", "peak torque", "r.m.s. torque", "mean torque", "shaft speed",
                         "peak power", "mean power"], rows)

