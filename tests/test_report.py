"""The HTML report: reads top-down, every JSON figure shown formatted, renders in headless Chromium."""

import base64
import html
import math
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from ridesim.export.results import flatten
from ridesim.jobs.report import write_report
from ridesim.render.report import format_figure, format_value
from ridesim.scenario.load import load_scenario

ROOT = Path(__file__).resolve().parent.parent
SCENARIO = ROOT / "scenarios" / "hexagon_trolley.toml"
SENTENCES = ("cautions", "reasons", "notes")
# A number in scientific notation (5.99998e-12, 1E+03): never in the page's own text.
SCI = re.compile(r"\b\d+(?:\.\d+)?[eE][+-]?\d+\b")
CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    out = tmp_path_factory.mktemp("report")
    sc = load_scenario(SCENARIO)
    page, figures = write_report(sc, out, simulate=True, clip_s=0.5)
    return page, figures, page.read_text(encoding="utf-8")


# ----------------------------------------------------------------------------- formatting


@pytest.mark.parametrize("key, value, text", [
    # The issue's own example: a floating-point residue of a touching contact reads as zero.
    ("clearance.min_m", 5.99998e-12, "0.000 mm"),
    ("torque.mean_Nm", 1.23e-17, "0.00000 N·m"),
    ("torque.mean_Nm", -1.23e-17, "0.00000 N·m"),  # no "-0.00000"
    # Unit conversions: 1 m = 1000 mm; pi/6 rad = 30 deg (definition of the radian).
    ("pair.period_m", 0.13183347464017314, "131.8 mm"),
    ("cusps.opening_angle_min_rad", math.pi / 6, "30.00 deg"),
    ("speed_m_s", 0.4, "0.4000 m/s"),
    ("max_shaft_speed_rpm", 31.830988618379084, "31.8 rpm"),
    ("gears[3].motor_max_speed_rpm", 3183.098848597183, "3,183 rpm"),
    ("window_s", [22.0, 23.0], "22.00, 23.00 s"),
    ("friction.available", 0.7, "0.7000"),
    ("cusps.count", 6, "6"),
    ("clearance.interferes", False, "no"),
    ("slip.onset_time_s", None, "none"),
    ("gears[1].limits", [], "none"),
])
def test_format_figure(key, value, text):
    assert format_figure(key, value) == text


def test_format_figure_never_writes_scientific_notation():
    for key in ("x_m", "x_Nm", "x_rad", "x_m_s2", "x_W", "x"):
        for v in (1e-300, -3e-17, 6e-12, 1e-4, 123456.7, 9.99e8):
            assert not SCI.search(format_figure(key, v)), (key, v)


# ----------------------------------------------------------------------------- the page


def _visible_text(page_html: str, keep_pre: bool = False) -> str:
    body = page_html.split("<body", 1)[1]
    body = re.sub(r"<style.*?</style>", " ", body, flags=re.S)
    if not keep_pre:
        body = re.sub(r"<pre>.*?</pre>", " ", body, flags=re.S)  # the user's own scenario text
    body = re.sub(r"<[^>]+>", " ", body)
    return html.unescape(body)


def test_page_reads_top_down(report):
    _, figures, text = report
    order = ["id=verdict", "The build at a glance", "<h2>Pictures", "<h2>Motor sizing",
             "<h2>Ride comfort", "<h2>Findings and cautions", "<h2>Appendix"]
    where = [text.find(s) for s in order]
    assert all(w >= 0 for w in where) and where == sorted(where), dict(zip(order, where, strict=True))
    assert "It rolls as designed" in text
    # Motor sizing: one row per motor, and the duty cycle's phases.
    for m in figures["size_motor"]["motors"]:
        assert f"<td>{m['name']}</td>" in text
    for phase in figures["size_motor"]["by_phase"]:
        assert f"<td>{phase}</td>" in text
    # Comfort: its band is named and marked in the ISO 2631-1 Annex C table.
    band = figures["simulate"]["comfort"]["band"]
    assert f"<tr class=hit><td class=n>less than 0.315 m/s²</td><td>{band}</td>" in text
    # Backticks of the findings become code, not literal backticks.
    assert "`" not in _visible_text(text)


def test_every_json_figure_appears_formatted(report):
    _, figures, text = report
    missing = []
    for block in ("check", "size_motor", "simulate"):
        for key, v in flatten(figures[block], lists="index").items():
            if key.split(".")[-1] in SENTENCES:
                for s in v:  # sentences are shown in the findings and cautions
                    if html.escape(s.replace("`", "")) not in text.replace("<code>", "").replace(
                            "</code>", ""):
                        missing.append((key, s[:40]))
                continue
            row = f"<tr><th>{html.escape(key)}</th><td>{html.escape(format_figure(key, v))}</td></tr>"
            if row not in text:
                missing.append((key, format_figure(key, v)))
    assert not missing, missing[:5]


def test_no_scientific_notation_and_the_scenario_as_written(report):
    _, _, text = report
    seen = _visible_text(text)
    assert not SCI.findall(seen), SCI.findall(seen)[:5]
    # The scenario is the user's TOML file, comments and all, not a JSON dump.
    toml = SCENARIO.read_text(encoding="utf-8")
    assert html.escape(toml) in text


def test_default_settings_raise_no_caution_about_themselves(report):
    """hexagon_trolley leaves run.settle_s and run.timestep_s at their defaults."""
    _, figures, _ = report
    for block in figures.values():
        for c in block.get("cautions", []):
            assert "settle_s" not in c and "timestep_s =" not in c, c


def test_page_is_self_contained(report):
    page, _, text = report
    assert not re.search(r'src="(?!data:)', text)  # every image is embedded
    assert "<link" not in text and "<script" not in text
    imgs = re.findall(r'src="data:image/(png|gif);base64,([^"]+)"', text)
    kinds = {k for k, _ in imgs}
    assert {"png", "gif"} <= kinds
    for _, data in imgs:
        raw = base64.b64decode(data)
        assert raw[:4] in (b"\x89PNG", b"GIF8")
    assert "licensed engineer" in text  # the cautions are there
    assert 'name=viewport' in text and "@media print" in text and "break-before:page" in text


# ----------------------------------------------------------------------------- in a browser


def _chromium(tmp_path, *args):
    flags = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
             "--disable-background-networking", "--disable-component-update", "--disable-sync",
             "--hide-scrollbars", f"--user-data-dir={tmp_path / 'profile'}"]
    return subprocess.run([CHROMIUM, *flags, *args], capture_output=True, text=True, timeout=120)


def _has_colour(im, rgb, tol=6, least=400):
    """At least ``least`` pixels within ``tol`` of ``rgb`` (the verdict box's background)."""
    n = 0
    for count, (r, g, b) in im.getcolors(maxcolors=1 << 24):
        if abs(r - rgb[0]) <= tol and abs(g - rgb[1]) <= tol and abs(b - rgb[2]) <= tol:
            n += count
    return n >= least


@pytest.mark.skipif(CHROMIUM is None, reason="headless Chromium is not installed here")
def test_renders_in_headless_chromium(report, tmp_path):
    from PIL import Image

    page, figures, _ = report
    dom = _chromium(tmp_path, "--dump-dom", page.as_uri()).stdout
    assert "It rolls as designed" in dom and "hexagon_trolley" in dom
    seen = _visible_text(dom)
    assert not SCI.findall(seen), SCI.findall(seen)[:5]
    flat = " ".join(seen.split())
    for block in ("check", "size_motor", "simulate"):
        for key, v in flatten(figures[block], lists="index").items():
            if key.split(".")[-1] not in SENTENCES:
                assert f"{key} {format_figure(key, v)}".strip() in flat, key
    # The verdict (its green box) is on the first screen of a desktop and of a phone.
    green = (0xDF, 0xF3, 0xE4)
    for w, h in ((1280, 800), (412, 900)):
        shot = tmp_path / f"first_{w}.png"
        _chromium(tmp_path, f"--window-size={w},{h}", f"--screenshot={shot}", page.as_uri())
        im = Image.open(shot).convert("RGB")
        assert im.size == (w, h)
        assert len(im.resize((w // 4, h // 4)).getcolors(maxcolors=1 << 16) or []) > 16  # drawn
        assert _has_colour(im, green), f"no verdict on the first {w}x{h} screen"


def test_a_changed_scenario_is_shown_as_run_not_as_its_file(tmp_path):
    """A scenario changed after loading is written from its values, and that TOML loads back."""
    from ridesim.render.report import scenario_toml

    sc = load_scenario(SCENARIO).replace("surface.friction", 0.9)
    text = scenario_toml(sc)
    assert "friction = 0.9" in text and "# Hexagon trolley" not in text
    (tmp_path / "as_run.toml").write_text(text, encoding="utf-8")
    again = load_scenario(tmp_path / "as_run.toml").to_dict()
    mine = sc.to_dict()
    again.pop("name"), mine.pop("name")  # the name comes from the file name
    assert again == mine
    assert scenario_toml(load_scenario(SCENARIO)) == SCENARIO.read_text(encoding="utf-8")


def test_report_of_a_gear_pair_shows_its_centre_distance(tmp_path):
    # Two identical ellipses turning about their foci roll on each other at a centre distance
    # of the major axis, 2a (classical elliptical gears: Litvin, Fuentes-Aznar, Gonzalez-Perez &
    # Hayasaka, Noncircular Gears: Design and Generation, 2009); the demo's a = 0.06 m.
    sc = load_scenario(ROOT / "scenarios" / "elliptic_gear_pair.toml")
    page, figures = write_report(sc, tmp_path, simulate=False, clip_s=0.5)
    assert figures["check"]["solve"]["centre_distance_m"] == pytest.approx(0.12, abs=1e-12)
    text = html.unescape(re.sub(r"<[^>]+>", " ", page.read_text()))
    assert "It rolls as designed." in text and "centre distance 120.0 mm" in text
    # Every figure of the check appears in the appendix, formatted with its unit.
    for key, v in flatten(figures["check"], lists="index").items():
        if key.split(".")[-1] in ("cautions", "reasons", "notes") or isinstance(v, (list, dict)):
            continue
        assert f"{key} {format_figure(key, v)}" in " ".join(text.split()), key


def test_hub_key_figures_are_the_check_and_size_motor_numbers(tmp_path):
    # One quantity, one truth: the key figures of a hub page are the numbers `check` and
    # `size-motor` return, formatted. For the elliptic pair the speed ratio runs over
    # (1 - e)/(1 + e) .. (1 + e)/(1 - e) (Litvin et al. 2009) with e = sqrt(1 - (b/a)^2).
    from ridesim.jobs import run_job

    sc = load_scenario(ROOT / "scenarios" / "elliptic_gear_pair.toml")
    page, figures = write_report(sc, tmp_path, simulate=False, clip_s=0.5)
    check, sm = run_job("check", sc), run_job("size-motor", sc)
    assert figures["check"]["friction"]["required_peak"] == pytest.approx(
        check["friction"]["required_peak"], rel=1e-12)
    assert figures["size_motor"]["peak_torque_Nm"] == pytest.approx(sm["peak_torque_Nm"], rel=1e-12)
    keys = re.search(r"<ul class=keys>(.*?)</ul>", page.read_text(), re.S).group(1)
    keys = " ".join(html.unescape(re.sub(r"<[^>]+>", " ", keys)).split())
    e = math.sqrt(1 - (0.05 / 0.06) ** 2)
    assert (1 - e) / (1 + e) == pytest.approx(check["speed_ratio_min"], rel=1e-5)
    for text in (format_figure("centre_distance_m", check["solve"]["centre_distance_m"]),
                 f"{format_value(check['friction']['required_peak'])} /"
                 f" {format_value(check['friction_available'])}",
                 format_value(check["speed_ratio_min"]), format_value(check["speed_ratio_max"]),
                 format_figure("peak_torque_Nm", sm["peak_torque_Nm"]),
                 format_figure("max_shaft_speed_rad_s", sm["max_shaft_speed_rad_s"]),
                 format_figure("peak_power_W", sm["peak_power_W"]),
                 "none: both convex"):
        assert text in keys, text


@pytest.mark.parametrize("name, label, shown", [
    ("ring_drum_from_hub", "Ring (given; the wheel is solved for it)", "lobes 4"),
    ("ratio_gear_pair", "Speed ratio (given; both pitch curves are solved for it)",
     "formula 1 + 0.3*cos(2*theta)"),
])
def test_hub_page_names_the_given_side(tmp_path, name, label, shown):
    """A pair solved from its hub or its speed ratio shows that given side in the build table."""
    sc = load_scenario(ROOT / "scenarios" / f"{name}.toml")
    page, _ = write_report(sc, tmp_path, simulate=False, clip_s=0.5)
    text = " ".join(html.unescape(re.sub(r"<[^>]+>", " ", page.read_text())).split())
    glance = text.split("The build at a glance", 1)[1].split("Pictures", 1)[0]
    assert label in glance and shown in glance
