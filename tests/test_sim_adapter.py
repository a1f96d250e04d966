"""The pymunk adapter: the fast path is active on the pinned pymunk, and pymunk's own public
interface (the reference here: ``pymunk.Space.step``, ``pymunk.batch`` and the motor's public
``impulse``, documented at pymunk.org) gives the same numbers on short runs.

The equivalence tests passed on pymunk 7.0.0, 7.1.0, 7.2.0 and 7.3.1 (each installed on its own
path ahead of the environment's); the pin in pyproject.toml is that range.

Body states and shaft torques are compared bit for bit. Contact sums (normal force) may differ
in the last bit: pymunk keeps a space's contact pairs in a hash set keyed by shape ids drawn
from a process-wide counter, so two builds of one world (fast or public alike) can add a
wheel's contacts in a different order; they are compared to 1e-12 relative.
"""

import dataclasses
import re
from pathlib import Path

import numpy as np
import pytest

from ridesim.scenario.load import scenario_from_dict
from ridesim.sim import pymunk_adapter as pa
from ridesim.sim.run import PymunkEngine

ROOT = Path(__file__).resolve().parents[1]


def cart(mode: str, axles: int = 2) -> object:
    drive = {"speed": {"mode": "speed", "speed_m_s": 0.4, "accel_m_s2": 0.8, "max_torque_Nm": 5.0},
             "torque": {"mode": "torque", "torque_Nm": 0.3},
             "shaft_speed": {"mode": "shaft_speed", "shaft_speed_rad_s": 3.0, "max_torque_Nm": 5.0}}[mode]
    return scenario_from_dict({
        "wheel": {"shape": "polygon", "sides": 6, "apothem_m": 0.1},
        "vehicle": {"body_mass_kg": 4.0, "axles": axles, "wheelbase_m": 0.3 if axles > 1 else 0.0},
        "drive": drive,
        "surface": {"friction": 0.8},
        "run": {"duration_s": 0.4, "timestep_s": 0.001, "settle_s": 0.1},
    })


def pinned_range() -> tuple[tuple[int, int], tuple[int, int]]:
    text = (ROOT / "pyproject.toml").read_text()
    m = re.search(r'"pymunk>=(\d+)\.(\d+),<(\d+)\.(\d+)"', text)
    assert m, "pyproject.toml pins pymunk as >=a.b,<c.d"
    a, b, c, d = (int(g) for g in m.groups())
    return (a, b), (c, d)


def test_pin_matches_the_verified_versions_and_the_installed_pymunk():
    lo, hi = pinned_range()
    installed = tuple(int(p) for p in pa.installed_pymunk_version().split(".")[:2])
    assert lo <= installed < hi
    for v in pa.VERIFIED_PYMUNK:
        assert lo <= v < hi
    assert pa.pymunk_verified()


def test_fast_path_is_active_on_the_pinned_pymunk():
    eng = PymunkEngine.from_scenario(cart("speed"))
    assert eng.interface == "fast"
    assert eng.cautions == []
    p = eng.run()
    assert p.info["pymunk_interface"] == "fast"
    assert p.info["torque_sign_known"] is True


def _same_run(sc):
    fast = PymunkEngine.from_scenario(sc, interface="fast")
    pub = PymunkEngine.from_scenario(sc, interface="public")
    assert (fast.interface, pub.interface) == ("fast", "public")
    return fast.run(), pub.run()


@pytest.mark.parametrize("mode,axles", [("speed", 2), ("torque", 2), ("speed", 1), ("speed", 3)])
def test_public_interface_gives_the_same_numbers(mode, axles):
    a, b = _same_run(cart(mode, axles))
    assert b.info["torque_sign_known"] is True
    assert np.any(a.contact)  # the run touched the track
    assert np.any(np.abs(a.shaft_torque_Nm) > 0)
    for f in dataclasses.fields(a):
        x, y = getattr(a, f.name), getattr(b, f.name)
        if not isinstance(x, np.ndarray):
            continue
        if f.name in ("normal_force_N", "slip_speed_m_s", "contact_x_m"):
            np.testing.assert_allclose(y, x, rtol=1e-12, atol=1e-12 * np.nanmax(np.abs(x)), err_msg=f.name)
        else:
            np.testing.assert_array_equal(y, x, err_msg=f.name)


def test_public_interface_reads_servo_torque_as_magnitude():
    # A shaft-speed servo is not saturated: pymunk's public impulse is |jAcc| and its sign is
    # not known; the magnitudes match and the run says so.
    a, b = _same_run(cart("shaft_speed"))
    np.testing.assert_array_equal(b.axle_x_m, a.axle_x_m)
    np.testing.assert_array_equal(np.abs(b.shaft_torque_Nm), np.abs(a.shaft_torque_Nm))
    assert b.info["torque_sign_known"] is False
    assert any("sign" in c for c in b.info["cautions"])


def test_unverified_pymunk_falls_back_with_one_caution(monkeypatch):
    assert not pa.pymunk_verified("6.11.1")
    assert not pa.pymunk_verified("7.4.0")
    assert not pa.pymunk_verified("7.99.1")
    assert not pa.pymunk_verified("dev")
    monkeypatch.setattr(pa, "installed_pymunk_version", lambda: "7.99.0")
    eng = PymunkEngine.from_scenario(cart("speed"))
    assert eng.interface == "public"
    notes = [c for c in eng.cautions if "7.99.0" in c]
    assert len(notes) == 1 and "\n" not in notes[0]
