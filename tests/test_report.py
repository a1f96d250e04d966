"""The HTML report: self-contained, every JSON figure shown, renders in headless Chromium."""

import base64
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from ridesim.jobs.report import write_report
from ridesim.render.report import flatten
from ridesim.scenario.load import load_scenario

ROOT = Path(__file__).resolve().parent.parent


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    out = tmp_path_factory.mktemp("report")
    sc = load_scenario(ROOT / "scenarios" / "hexagon_trolley.toml")
    page, figures = write_report(sc, out, simulate=False, clip_s=1.0)
    return page, figures, page.read_text(encoding="utf-8")


def shown(v):
    """How a figure must read in the page (six significant digits; yes/no; none)."""
    if v is None:
        return "none"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float):
        return f"{v:.6g}"
    if isinstance(v, list):
        return ", ".join(shown(x) for x in v)
    return str(v)


def test_every_json_figure_appears_in_the_page(report):
    page, figures, text = report
    text = text.replace("&#x27;", "'").replace("&quot;", '"').replace("&amp;", "&")
    missing = []
    for block in ("check", "size_motor"):
        for key, v in flatten(figures[block]):
            if key.split(".")[-1] in ("cautions", "reasons", "notes"):
                for s in v:  # sentences are shown in the lists
                    if s not in text:
                        missing.append((key, s[:40]))
                continue
            row = f"<th>{key}</th><td class=v>{shown(v)}</td>"
            if row not in text:
                missing.append((key, shown(v)))
    assert not missing, missing[:5]


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
    assert 'name=viewport' in text and "@media print" in text


@pytest.mark.skipif(shutil.which("chromium") is None and shutil.which("chromium-browser") is None,
                    reason="headless Chromium is not installed here")
def test_renders_in_headless_chromium(report, tmp_path):
    page, _, _ = report
    exe = shutil.which("chromium") or shutil.which("chromium-browser")
    flags = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
             "--disable-background-networking", "--disable-component-update", "--disable-sync",
             f"--user-data-dir={tmp_path / 'profile'}"]
    dom = subprocess.run([exe, *flags, "--dump-dom", page.as_uri()], capture_output=True,
                         text=True, timeout=120)
    assert "It rolls" in dom.stdout and "hexagon_trolley" in dom.stdout
    shot = tmp_path / "phone.png"
    subprocess.run([exe, *flags, "--window-size=412,900", f"--screenshot={shot}", page.as_uri()],
                   capture_output=True, timeout=120)
    from PIL import Image

    im = Image.open(shot).convert("RGB")
    assert im.size == (412, 900)
    assert len(im.resize((103, 225)).getcolors(maxcolors=1 << 16) or []) > 16  # not blank
