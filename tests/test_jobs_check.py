"""Tests of the scenario verdict (ridesim.jobs.check) on the demo scenarios and a triangle.

Sources: L. Hall & S. Wagon, "Roads and Wheels", Mathematics Magazine 65(5), 1992 (n-gon
roads, the triangle's interference); the polar moment of a regular n-gon plate of
circumradius R about its centre, I = m R^2 (1 + 2 cos^2(pi/n)) / 6 ([memory]; for the
square it gives m s^2/6 with side s, the textbook plate value); the Kepler relations of
the ellipse (r = a(1 - e cos E), dtheta/dE = b/r; e.g. Murray & Dermott, "Solar System
Dynamics", 1999 [memory]).
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest

from ridesim.errors import InputError
from ridesim.jobs.check import SAFETY_CAUTIONS, CheckResult, check_scenario
from ridesim.scenario.load import load_scenario, scenario_from_dict

SCENARIOS = Path(__file__).resolve().parent.parent / "scenarios"
G = 9.80665


def load(name):
    return load_scenario(SCENARIOS / f"{name}.toml")


def assert_plain(value, path="$"):
    """Only JSON types (exactly: numpy scalars are not allowed)."""
    t = type(value)
    if t is dict:
        for k, v in value.items():
            assert type(k) is str, path
            assert_plain(v, f"{path}.{k}")
    elif t is list:
        for i, v in enumerate(value):
            assert_plain(v, f"{path}[{i}]")
    else:
        assert t in (bool, int, float, str, type(None)), f"{path}: {t.__name__}"
        if t is float:
            assert math.isfinite(value), path


def contract(d):
    assert type(d["rollable"]) is bool
    assert all(type(r) is str for r in d["reasons"])
    assert {"min_m", "at_x_m"} <= set(d["clearance"])
    assert {"required_peak", "at_x_m", "available", "slips"} <= set(d["friction"])
    assert {"peak_Nm", "rms_Nm"} <= set(d["torque"])
    assert "lift_off_speed_m_s" in d
    assert d["cautions"] and all(type(c) is str for c in d["cautions"])
    assert_plain(d)
    json.dumps(d, allow_nan=False)
    if d["rollable"]:
        assert d["reasons"] == []
    else:
        assert d["reasons"]


@pytest.fixture(scope="module")
def demos():
    return {n: check_scenario(load(n)) for n in
            ("hexagon_trolley", "ellipse_pull_toy", "wave_track_sculpture")}


def test_demo_contract(demos):
    for res in demos.values():
        assert isinstance(res, CheckResult)
        contract(res.to_dict())
        assert res.to_text().strip()


def test_hexagon_trolley(demos):
    """Regular hexagon, apothem a = 0.12 m, on its catenary road, two axles in phase.

    Friction: tan(pi/6) at the cusps (Hall & Wagon 1992). Torque: both wheels driven, so each
    shaft only spins its own wheel up and down, T = I alpha, peak I v^2 sin(2 pi/n)/(2 a^2)
    and RMS I v^2/a^2 sqrt(sin^3(pi/n)/(3 asinh(tan(pi/n)))) (derived in
    test_assess_analytic); the plate is 18 mm plywood at 600 kg/m^3 with area
    n a^2 tan(pi/n). The closed forms hold at steady speed, so the demo's start
    acceleration is set to 0 here; accelerating, the wheels need more grip than tan(pi/n).
    """
    d = check_scenario(load("hexagon_trolley").replace("drive.accel_m_s2", 0.0)).to_dict()
    assert demos["hexagon_trolley"].to_dict()["friction"]["required_peak"] > math.tan(math.pi / 6)
    n, a, v = 6, 0.12, 0.4
    assert d["rollable"] is True
    assert d["clearance"]["min_m"] >= -1e-9 * a / math.cos(math.pi / n)
    np.testing.assert_allclose(d["friction"]["required_peak"], math.tan(math.pi / n), rtol=1e-8)
    assert d["friction"]["available"] == 0.7 and d["friction"]["slips"] is False
    m = 600.0 * 0.018 * n * a * a * math.tan(math.pi / n)
    R = a / math.cos(math.pi / n)
    inertia = m * R * R * (1 + 2 * math.cos(math.pi / n) ** 2) / 6
    scale = inertia * v * v / (a * a)
    np.testing.assert_allclose(d["torque"]["peak_Nm"], 0.5 * math.sin(2 * math.pi / n) * scale,
                               rtol=1e-8)
    uc = math.asinh(math.tan(math.pi / n))
    np.testing.assert_allclose(d["torque"]["rms_Nm"],
                               math.sqrt(math.sin(math.pi / n) ** 3 / (3 * uc)) * scale, rtol=1e-9)
    assert d["lift_off_speed_m_s"] is None  # centre of mass on the axle, level axle
    np.testing.assert_allclose(d["shaft_speed_max_rad_s"], v / a, rtol=1e-12)


def test_ellipse_pull_toy(demos):
    """Ellipse a = 0.05, b = 0.04 m about its focus (c = 0.03 m): road y = -a + c cos(x/b).

    Its steepest slope is c/b = 0.75, above the toy's surface friction of 0.6, so it slips
    (the wheel's own off-axle mass adds a little more demand); the demo's rubber tread (0.9)
    is replaced here by bare wood (0.6) to see the slip. Lift-off: the centre of mass
    (the ellipse centre) is c above the axle when the contact is at the least radius a - c
    (slope 0), so the wheel unloads when m c omega^2 = W + m g, omega = v/(a - c).
    """
    assert demos["ellipse_pull_toy"].to_dict()["rollable"] is True  # with its 0.9 tread
    d = check_scenario(load("ellipse_pull_toy").replace("surface.friction", 0.6)).to_dict()
    a, b, c = 0.05, 0.04, 0.03
    assert d["rollable"] is False
    assert d["friction"]["slips"] is True
    assert d["friction"]["required_peak"] >= c / b * (1 - 1e-9)
    assert any("friction" in r for r in d["reasons"])
    assert d["clearance"]["interferes"] is False
    m = 700.0 * 0.012 * math.pi * a * b
    v_lift = (a - c) * math.sqrt((0.4 * G + m * G) / (m * c))
    # least over the cycle nodes; flat to second order at the minimum: 1e-6
    np.testing.assert_allclose(d["lift_off_speed_m_s"], v_lift, rtol=1e-6)


def test_wave_track_sculpture(demos):
    """Track-first wave f = A cos(2 pi x/lambda): friction peak 2 pi A/lambda (the steepest slope).

    The three-lobed wheel is symmetric, so its centre of mass is on the axle: the contact
    force stays vertical and nothing lifts it off.
    """
    d = demos["wave_track_sculpture"].to_dict()
    A, lam = 0.02, 0.3
    assert d["rollable"] is True
    # even grid of 2048 nodes over 3 wavelengths: the peak of |sin| is missed by < 1e-5
    np.testing.assert_allclose(d["friction"]["required_peak"], 2 * math.pi * A / lam, rtol=2e-5)
    assert d["lift_off_speed_m_s"] is None
    assert d["cusps"]["count"] == 0


def triangle_dict(**extra):
    data = {"wheel": {"shape": "polygon", "sides": 3, "apothem_m": 0.2},
            "vehicle": {"body_mass_kg": 5.0}, "surface": {"friction": 0.8}}
    data.update(extra)
    return data


def test_triangle_scenario_does_not_roll():
    """Hall & Wagon (1992): the triangle interferes with its road; its cusps need tan 60 deg."""
    res = check_scenario(scenario_from_dict(triangle_dict()))
    d = res.to_dict()
    contract(d)
    assert d["rollable"] is False
    assert d["clearance"]["interferes"] is True and d["clearance"]["min_m"] < 0
    np.testing.assert_allclose(d["friction"]["required_peak"], math.tan(math.pi / 3), rtol=1e-8)
    assert d["friction"]["slips"] is True
    assert len(d["reasons"]) == 2
    assert "cuts" in d["reasons"][0] and "more sides" in d["reasons"][0]
    # the cusps open by pi/3, a right angle is needed: approach margin pi/3 - pi/2
    np.testing.assert_allclose(d["cusps"]["approach_margin_min_rad"], -math.pi / 6, atol=1e-9)


def hexagon_dict(**vehicle):
    return {"wheel": {"shape": "polygon", "sides": 6, "apothem_m": 0.12},
            "vehicle": {"body_mass_kg": 8.0, "axles": 2, **vehicle},
            "surface": {"friction": 0.9}}


def test_coupled_axles_need_whole_periods():
    """Wheels on one chain turn alike, so r(x + wheelbase) = r(x): whole track periods only."""
    period = 2 * 0.12 * math.asinh(math.tan(math.pi / 6))  # Hall & Wagon (1992)
    ok = check_scenario(scenario_from_dict(hexagon_dict(coupled=True, wheelbase_m=3 * period)))
    bad = check_scenario(scenario_from_dict(hexagon_dict(coupled=True, wheelbase_m=2.5 * period)))
    assert ok.rollable is True
    assert bad.rollable is False and any("coupled" in r for r in bad.reasons)
    contract(ok.to_dict())
    assert "chain_peak_Nm" in ok.to_dict()["torque"]


def test_lift_off_blocks_a_fast_eccentric_wheel():
    """Circle about an axle e below its centre: unloads at v = (R - e) sqrt((W + m g)/(m e))."""
    R, e, body = 0.1, 0.03, 0.5
    m = 700.0 * 0.02 * math.pi * R * R
    v_lift = (R - e) * math.sqrt((body * G + m * G) / (m * e))
    base = {"wheel": {"shape": "circle", "radius_m": R, "axle_m": [0.0, -e]},
            "vehicle": {"body_mass_kg": body}, "surface": {"friction": 0.9}}
    slow = check_scenario(scenario_from_dict({**base, "drive": {"speed_m_s": 0.9 * v_lift}}))
    fast = check_scenario(scenario_from_dict({**base, "drive": {"speed_m_s": 1.1 * v_lift}}))
    assert not any("leaves the track" in r for r in slow.reasons)
    assert fast.rollable is False and any("leaves the track" in r for r in fast.reasons)
    np.testing.assert_allclose(fast.to_dict()["lift_off_speed_m_s"], v_lift, rtol=1e-6)
    contract(fast.to_dict())


def test_acceleration_adds_friction_demand():
    """A driven wheel pushing mass M on a flat road: mu = (M + m) a / ((M + m) g) = a / g (Newton)."""
    data = {"wheel": {"shape": "circle", "radius_m": 0.1}, "vehicle": {"body_mass_kg": 10.0},
            "drive": {"speed_m_s": 0.5, "accel_m_s2": 9.0}, "surface": {"friction": 0.8}}
    d = check_scenario(scenario_from_dict(data)).to_dict()
    # solved flat track: slope noise < 1e-10
    np.testing.assert_allclose(d["friction"]["required_peak"], 9.0 / G, rtol=1e-8)
    assert d["friction"]["slips"] is True and d["rollable"] is False
    # Starting at 9 m/s^2 needs far more torque than cruising on a loss-free road (0 N m).
    ph = d["torque"]["by_phase"]
    assert ph["startup"]["peak_Nm"] > 0.5 and ph["cruise"]["peak_Nm"] < 1e-9


def test_cautions_name_the_standards():
    text = " ".join(SAFETY_CAUTIONS)
    for std in ("ASTM F2291", "EN 13814", "ISO 12100", "ISO 13857"):
        assert std in text


def test_unclosed_track_is_not_rollable():
    """A track-first solve at a depth that does not close gives no wheel at all."""
    data = {"track": {"shape": "wave", "amplitude_m": 0.02, "wavelength_m": 0.3, "depth_m": 0.2}}
    d = check_scenario(scenario_from_dict(data)).to_dict()
    contract(d)
    assert d["rollable"] is False and "close" in d["reasons"][0]


def test_bad_input():
    with pytest.raises(InputError, match="Scenario"):
        check_scenario({"wheel": {}})


def test_fitting_the_track_to_rounded_corners():
    """wheel.fit_track_to_corners solves the track for the rounded wheel: no cusps, and the
    friction a steady ride needs is (1 - r/a) tan(pi/n), where a flat meets its corner's arc
    (derived in tests/test_assess_friction.py from Hall & Wagon's arches). Without it the
    track is the sharp polygon's, tan(pi/n), and the check says the corners change the
    contact there."""
    base = {"wheel": {"shape": "polygon", "sides": 6, "apothem_m": 0.12, "corner_radius_m": 0.006},
            "vehicle": {"body_mass_kg": 8.0, "axles": 1}, "surface": {"friction": 0.9}}
    sharp = check_scenario(scenario_from_dict(base)).to_dict()
    np.testing.assert_allclose(sharp["friction"]["required_peak"], math.tan(math.pi / 6), rtol=1e-8)
    assert any("checked for sharp corners" in n for n in sharp["notes"])
    fitted = dict(base, wheel=dict(base["wheel"], fit_track_to_corners=True))
    d = check_scenario(scenario_from_dict(fitted)).to_dict()
    contract(d)
    np.testing.assert_allclose(d["friction"]["required_peak"],
                               (1 - 0.006 / 0.12) * math.tan(math.pi / 6), rtol=1e-6)
    assert not any("checked for sharp corners" in n for n in d["notes"])
    assert d["rollable"] is True and d["cusps"]["count"] == 0


@pytest.mark.parametrize("coupled", [True, False])
def test_torque_limit_is_per_motor(coupled):
    """drive.max_torque_Nm is per motor. Two round wheels (R 0.2 m, 1.5 kg, I 0.03 kg m^2),
    body 20 kg, C_rr 0.01, starting at 0.5 m/s^2: by Newton's second law with the wheels'
    rotational inertia the shafts together need R (C_rr M g + (body + 2 (m + I/R^2)) a)
    = 2.90 N m. One 2 N m motor on a coupled train cannot deliver it; two uncoupled 2 N m
    motors, 1.45 N m each, can."""
    R, m, inertia, body, a, crr = 0.2, 1.5, 0.03, 20.0, 0.5, 0.01
    need = R * (crr * (body + 2 * m) * G + (body + 2 * (m + inertia / R**2)) * a)
    sc = scenario_from_dict({
        "wheel": {"shape": "circle", "radius_m": R, "mass_kg": m, "inertia_kg_m2": inertia},
        "vehicle": {"body_mass_kg": body, "axles": 2, "wheelbase_m": 2 * math.pi * R,
                    "coupled": coupled},
        "drive": {"speed_m_s": 1.0, "accel_m_s2": a, "max_torque_Nm": 2.0},
        "surface": {"friction": 1.0, "rolling_resistance": crr}})
    res = check_scenario(sc)
    per_motor = need if coupled else need / 2
    np.testing.assert_allclose(res.to_dict()["torque"]["by_phase"]["startup"]["peak_Nm"], per_motor,
                               rtol=1e-8)
    limited = any("torque limit" in n for n in res.notes)
    assert limited is coupled
# ------------------------------------------------------------------ the wheelbase, as built


def rounded_polygon_period(n, a, rho):
    """Track period of a regular n-gon (apothem a) with corners rounded to rho: a flat rolls
    over 2 a asinh(tan u_e), tan u_e = (a - rho) tan(pi/n) / a, and a corner arc (centre
    D = (a - rho)/cos(pi/n) from the axle, half-angle psi_e = pi/n - u_e) over
    2 D sin(psi_e) + 2 rho E(psi_e | D^2/rho^2), since there r = D cos psi +
    sqrt(rho^2 - D^2 sin^2 psi) and dx = r dtheta (Hall & Wagon, Math. Mag. 65, 1992); E for
    m > 1 by the reciprocal-modulus transformation (NIST DLMF 19.7.4)."""
    from scipy.special import ellipeinc, ellipkinc

    ue = math.atan((a - rho) * math.tan(math.pi / n) / a)
    D = (a - rho) / math.cos(math.pi / n)
    pe = math.pi / n - ue
    m = D * D / (rho * rho)
    k = math.sqrt(m)
    beta = math.asin(k * math.sin(pe))
    E = k * ellipeinc(beta, 1.0 / m) - (m - 1.0) / k * ellipkinc(beta, 1.0 / m)
    return 2 * a * math.asinh(math.tan(ue)) + 2 * D * math.sin(pe) + 2 * rho * E


def rounded_square_dict(**vehicle):
    return {"wheel": {"shape": "polygon", "sides": 4, "apothem_m": 0.25, "corner_radius_m": 0.01,
                      "fit_track_to_corners": True},
            "vehicle": {"axles": 2, "coupled": True, **vehicle},
            "surface": {"friction": 1.2}}


def test_coupled_wheelbase_within_the_build_tolerance_rolls():
    """A square of apothem 0.25 m with 10 mm fitted corners has a track period of 0.4406255 m
    (closed form above): 0.881252 m is two periods to within a micrometre, and 0.8812 m (two
    periods to 0.1 mm) to within 0.06 mm, both inside the default 0.5 mm build tolerance
    (a workshop figure: common practice). Neither may be refused."""
    from ridesim.assess.phasing import cart_phasing
    from ridesim.scenario.build import solve_scenario

    P = rounded_polygon_period(4, 0.25, 0.01)
    sc = scenario_from_dict(rounded_square_dict(wheelbase_m=0.881252))
    assert abs(0.881252 - 2 * P) < 1e-6
    res = check_scenario(sc)
    assert res.rollable, res.reasons
    cart = res.to_dict()["cart"]
    assert cart["out_of_phase"] is False and cart["whole_periods"] == 2
    assert cart["wheelbase_error_m"] == pytest.approx(0.881252 - 2 * P, abs=1e-9)
    assert not any("coupled" in n for n in res.notes)
    hint = sc.replace("vehicle.wheelbase_m", 0.8812).vehicle
    assert abs(0.8812 - 2 * P) < 6e-5
    assert not cart_phasing(solve_scenario(sc), hint).out_of_phase


def test_coupled_wheelbase_of_one_and_a_half_periods_is_refused_with_its_cost():
    """1.5 periods of a 0.3 m square (P = 2 a asinh(1): Hall & Wagon 1992) is really out of
    phase: refused, with the bounce and pitch of the quasi-static model (checked against the
    exact resting heights in test_assess_phasing) and the nearest whole-period wheelbase
    that keeps the wheels apart (2 P >= 2 r_max = 2 sqrt(2) a)."""
    a = 0.3
    P = 2 * a * math.asinh(1.0)
    d = {"wheel": {"shape": "polygon", "sides": 4, "apothem_m": a},
         "vehicle": {"axles": 2, "coupled": True, "wheelbase_m": 1.5 * P},
         "surface": {"friction": 1.5}}
    res = check_scenario(scenario_from_dict(d))
    assert not res.rollable
    cart = res.to_dict()["cart"]
    assert cart["out_of_phase"] is True and cart["bounce_m"] > 0.03
    (reason,) = [r for r in res.reasons if "coupled" in r]
    assert f"bounces {1000 * cart['bounce_m']:.2f} mm" in reason
    assert f"pitches {math.degrees(cart['pitch_range_rad']):.3f} deg" in reason
    assert f"make the wheelbase {2 * P:.4f} m (vehicle.wheelbase_periods = 2)" in reason
    contract(res.to_dict())


def test_wheelbase_in_track_periods():
    """vehicle.wheelbase_periods = 3 puts the axles 3 track periods apart: 3 x 2 a
    asinh(tan(pi/6)) for the hexagon (Hall & Wagon 1992)."""
    from ridesim.errors import ScenarioError
    from ridesim.scenario.build import resolve_wheelbase, solve_scenario

    P = 2 * 0.12 * math.asinh(math.tan(math.pi / 6))
    sc = scenario_from_dict(hexagon_dict(coupled=True, wheelbase_periods=3))
    assert sc.vehicle.wheelbase_periods == 3 and sc.vehicle.wheelbase_m == 0.0
    res = check_scenario(sc)
    assert res.rollable, res.reasons
    assert res.to_dict()["cart"]["wheelbase_m"] == pytest.approx(3 * P, rel=1e-12)
    pair = solve_scenario(sc)
    assert resolve_wheelbase(sc, pair).vehicle.wheelbase_m == pytest.approx(3 * P, rel=1e-12)
    # Both given: they must agree within the build tolerance, and wheelbase_m is kept.
    both = scenario_from_dict(hexagon_dict(coupled=True, wheelbase_periods=3,
                                           wheelbase_m=3 * P + 2e-4))
    assert resolve_wheelbase(both, pair).vehicle.wheelbase_m == 3 * P + 2e-4
    clash = scenario_from_dict(hexagon_dict(coupled=True, wheelbase_periods=3, wheelbase_m=0.4))
    with pytest.raises(ScenarioError,
                       match=r"wheelbase_m = 0\.4 m and vehicle\.wheelbase_periods = 3 .*give only one"):
        resolve_wheelbase(clash, pair)


def test_parabola_arch_track_checks_as_robisons_wheel():
    """The parabola arches -(x - 0.2)^2 / 0.4 of period 0.4 m with two lobes roll the parabola
    r = 2f / (1 + |cos phi|), f = 0.1 m (Robison, Math. Mag. 33, 1960; derived in
    test_solve_inverse): a plate of area 16 f^2 / 3 that clears the track."""
    d = {"track": {"shape": "formula", "formula": "-((x-0.2)**2)/0.4", "period_m": 0.4,
                   "lobes": 2},
         "wheel": {"thickness_m": 0.01, "density_kg_m3": 1000.0},
         "surface": {"friction": 1.5}}
    res = check_scenario(scenario_from_dict(d))
    out = res.to_dict()
    assert out["pair"]["depth_max_m"] == pytest.approx(0.2, rel=1e-12)
    assert out["pair"]["wheel_mass_kg"] == pytest.approx(1000.0 * 0.01 * 16 * 0.01 / 3, rel=1e-10)
    assert out["clearance"]["interferes"] is False and out["clearance"]["min_m"] > -1e-9
