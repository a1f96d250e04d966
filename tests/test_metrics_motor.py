"""Motor sizing against hand calculations from Newton's laws.

Circle-wheeled cart on its flat track, all wheels driven, over a trapezoidal
duty cycle. Per driven wheel of radius R (Newton's second law for the cart and
for each wheel, with the textbook rolling-resistance model: resisting torque
C_rr·N·R, Gillespie, "Fundamentals of Vehicle Dynamics", SAE 1992 [memory]):

    accelerating at a:  T_a = R·M·(a + g·C_rr)/n + I·a/R
    cruising:           T_c = R·M·g·C_rr/n
    braking at b:       T_b = R·M·(g·C_rr - b)/n - I·b/R

with M the total mass (body and wheels) and n the number of wheels. The
cycle's r.m.s. torque is √((T_a² t_a + T_c² t_c + T_b² t_b) / (t_a + t_c + t_b))
(common practice in motor application notes). C_rr = 0.010 is the low end of
the range for a car tyre on concrete, 0.010-0.015 (engineering tables, as
listed in the project's REFERENCES).
"""

import math

import numpy as np
import pytest

from ridesim.jobs.size_motor import size_motor
from ridesim.metrics.motor import duty_profile
from ridesim.scenario.load import scenario_from_dict

G = 9.80665
R, BODY, AXLES, CRR = 0.1, 12.0, 2, 0.010
V, A, B, CRUISE = 0.5, 0.25, 0.5, 4.0


def cart(**extra):
    d = {
        "wheel": {"shape": "circle", "radius_m": R, "thickness_m": 0.02, "density_kg_m3": 700.0},
        "vehicle": {"body_mass_kg": BODY, "axles": AXLES, "wheelbase_m": 0.5},
        "drive": {"mode": "speed", "speed_m_s": V, "accel_m_s2": A},
        "surface": {"friction": 0.9, "rolling_resistance": CRR},
        "duty": {"cruise_s": CRUISE, "brake_m_s2": B},
    }
    for k, v in extra.items():
        d.setdefault(k, {}).update(v)
    return scenario_from_dict(d)


def hand():
    m = 700.0 * 0.02 * math.pi * R * R  # disk mass [kg]
    inertia = 0.5 * m * R * R  # uniform disk about its axis (textbook)
    M = BODY + AXLES * m
    Ta = R * M * (A + G * CRR) / AXLES + inertia * A / R
    Tc = R * M * G * CRR / AXLES
    Tb = R * M * (G * CRR - B) / AXLES - inertia * B / R
    ta, tb = V / A, V / B
    rms = math.sqrt((Ta**2 * ta + Tc**2 * CRUISE + Tb**2 * tb) / (ta + CRUISE + tb))
    return Ta, Tc, Tb, rms


def test_circle_cart_torques_match_newton():
    Ta, Tc, Tb, rms = hand()
    res = size_motor(cart())
    tq = res.torque_Nm[0]
    t = res.t_s
    ta = V / A
    np.testing.assert_allclose(tq[t < ta], Ta, rtol=1e-9)
    np.testing.assert_allclose(tq[(t > ta) & (t < ta + CRUISE)], Tc, rtol=1e-9)
    np.testing.assert_allclose(tq[(t > ta + CRUISE) & (t < ta + CRUISE + V / B)], Tb, rtol=1e-9)
    assert res.peak_torque_Nm == pytest.approx(max(abs(Ta), abs(Tb)), rel=1e-9)
    # The phases fall on whole samples here, so the sampled r.m.s. is the closed form.
    assert res.rms_torque_Nm == pytest.approx(rms, rel=1e-9)
    assert res.max_shaft_speed_rpm == pytest.approx(V / R * 60 / (2 * math.pi), rel=1e-12)
    # Peak power is at the end of the ramp; midpoint samples stop a*dt/2 short of the top
    # speed (dt = 0.01 s here), a relative shortfall of a*dt/(2V) = 2.5e-3.
    assert res.peak_power_W == pytest.approx(Ta * (V - A * 0.005) / R, rel=1e-9)
    # Mean delivered power (braking power counted as zero: here T_b < 0 since b > g C_rr):
    # [int_0^ta T_a (A t)/R dt + T_c (V/R) t_c] / t_total; midpoint samples integrate the
    # linear ramp exactly.
    ta, tb = V / A, V / B
    assert Tb < 0
    mean = (Ta * A * ta**2 / (2 * R) + Tc * V / R * CRUISE) / (ta + CRUISE + tb)
    assert res.mean_power_W == pytest.approx(mean, rel=1e-9)


def test_duty_profile_is_trapezoidal():
    t, v, a = duty_profile(1.0, 0.5, 1.0, 3.0, 1.0, 0.01)
    dt = t[1] - t[0]
    # Distance covered: area of the trapezoid, v*(t_a/2 + t_c + t_b/2) = 1*(1 + 3 + 0.5).
    assert np.sum(v) * dt == pytest.approx(4.5, rel=1e-3)
    assert v.max() == pytest.approx(1.0) and v[-1] == 0.0
    assert set(np.unique(a)) == {-1.0, 0.0, 0.5}


def test_grade_adds_the_slope_force():
    # On a grade α the driven shafts also carry M·g·sin(α)·R/n (tractive-force model,
    # Ehsani et al. 2018, ch. 2 [memory]).
    flat = size_motor(cart())
    alpha = 0.05
    up = size_motor(cart(duty={"grade_rad": alpha}))
    m = 700.0 * 0.02 * math.pi * R * R
    extra = (BODY + AXLES * m) * G * math.sin(alpha) * R / AXLES
    np.testing.assert_allclose(up.torque_Nm - flat.torque_Nm, extra, rtol=1e-9)
    assert any("grade" in c for c in up.cautions)


def test_gear_ratio_choice_and_cautions():
    Ta, Tc, Tb, rms = hand()
    # A motor rated 0.2 N m continuous, 0.6 N m peak, 300 rad/s; gearbox efficiency 0.9.
    sc = cart(motor={"gear_ratios": [1.0, 5.0, 20.0, 80.0], "rated_torque_Nm": 0.2,
                     "peak_torque_Nm": 0.6, "rated_speed_rad_s": 300.0, "efficiency": 0.9,
                     "safety_factor": 1.5})
    res = size_motor(sc)
    by = {g.ratio: g for g in res.gears}
    for i, g in by.items():
        assert g.motor_rms_torque_Nm == pytest.approx(rms / (i * 0.9), rel=1e-9)
        assert g.motor_max_speed_rad_s == pytest.approx(V / R * i, rel=1e-12)
    # i = 1: too much torque; i = 80: 400 rad/s x 1.5 > 300 rad/s.
    assert not by[1.0].fits and "continuous torque" in by[1.0].limits
    assert not by[80.0].fits and by[80.0].limits == ("speed",)
    expected = min(i for i in (5.0, 20.0)
                   if rms / (i * 0.9) * 1.5 <= 0.2 and max(abs(Ta), abs(Tb)) / (i * 0.9) * 1.5 <= 0.6
                   and V / R * i * 1.5 <= 300.0)
    assert res.best_ratio == expected
    d = res.to_dict()
    for key in ("peak_torque_Nm", "rms_torque_Nm", "max_shaft_speed_rpm", "peak_power_W",
                "mean_power_W", "cautions"):
        assert key in d
    assert any("licensed engineer" in c for c in d["cautions"])


def test_missing_accel_is_assumed_and_said():
    res = size_motor(cart(drive={"accel_m_s2": 0.0}))
    assert res.accel_m_s2 == 0.25
    assert any("drive.accel_m_s2 is not given" in c for c in res.cautions)


def test_square_wheel_cruise_torque_matches_analytic_peak():
    # Square plate wheels at steady speed: the shaft torque is I·α with α = d(v/r)/dt and
    # r = a·cosh(x/a); its peak I·v²/(2a²) falls at the cusp (derived in
    # test_assess_analytic). During the cruise the sized torque must reach that value and
    # not exceed it (64 samples a period catch the peak within a few percent).
    a, v = 0.3, 0.5
    sc = scenario_from_dict({
        "wheel": {"shape": "polygon", "sides": 4, "apothem_m": a},
        "vehicle": {"body_mass_kg": 5.0, "axles": 1},
        "drive": {"speed_m_s": v, "accel_m_s2": 0.01},
        "surface": {"friction": 1.2},
        "duty": {"cruise_s": 20.0},
    })
    res = size_motor(sc)
    from ridesim.scenario.build import solve_scenario, wheel_mass

    inertia = wheel_mass(sc, solve_scenario(sc).wheel).inertia_kg_m2
    t_a = v / 0.01
    cruise = (res.t_s > t_a) & (res.t_s < t_a + 20.0)
    peak = inertia * v * v / (2 * a * a)
    sampled = float(np.max(np.abs(res.torque_Nm[0][cruise])))
    assert 0.95 * peak <= sampled <= peak * (1 + 1e-9)
    # The reported peak includes the exact one-sided value at the cusp.
    assert res.peak_torque_Nm >= peak * (1 - 1e-9)


# --------------------------------------------------------------------------- one motor per shaft
# Motors sit on shafts: an uncoupled driven axle has its own motor, a coupled train (one chain
# turning every axle) has one motor. ``check``, ``size-motor`` and ``simulate`` report torque
# per motor and by phase. The cart of the reproducer: circle wheels R = 0.2 m, m = 1.5 kg,
# I = 0.03 kg m^2 about the axle; body 20 kg; two axles; speed drive 1 m/s reached at
# 0.5 m/s^2 from rest; friction 1; C_rr = 0.01.
#
# Newton's second law for the cart with the wheels' rotational inertia (each wheel's spin-up
# I alpha = I a / R needs a force I a / R^2 at the rim, so the effective mass is
# M_e = body + 2 (m + I / R^2)), and rolling resistance C_rr N at the rim with N the whole
# weight (Gillespie 1992 [memory]): the driving force is F = C_rr M g + M_e a, and the torque
# of the shafts together is F R. One motor on a coupled train delivers all of it; two
# uncoupled motors share it equally (the two axles carry equal loads). g is standard gravity,
# 9.80665 m/s^2 (CGPM 1901); with g = 9.81 the issue's 2.90 N m is the same to 3 digits.

CIRCLE_R, CIRCLE_M, CIRCLE_I, CIRCLE_BODY, CIRCLE_V, CIRCLE_A, CIRCLE_CRR = (
    0.2, 1.5, 0.03, 20.0, 1.0, 0.5, 0.01)


def circle_cart(coupled: bool):
    return scenario_from_dict({
        "wheel": {"shape": "circle", "radius_m": CIRCLE_R, "mass_kg": CIRCLE_M,
                  "inertia_kg_m2": CIRCLE_I},
        # one track period (2 pi R): a coupled train needs whole periods
        "vehicle": {"body_mass_kg": CIRCLE_BODY, "axles": 2, "wheelbase_m": 2 * math.pi * CIRCLE_R,
                    "coupled": coupled},
        "drive": {"mode": "speed", "speed_m_s": CIRCLE_V, "accel_m_s2": CIRCLE_A},
        "surface": {"friction": 1.0, "rolling_resistance": CIRCLE_CRR},
        "duty": {"cruise_s": 4.0},
        "run": {"duration_s": 3.5, "settle_s": 1.0},
    })


def circle_newton():
    """Start-up and cruise torque [N m] of all the shafts together (Newton's second law)."""
    M = CIRCLE_BODY + 2 * CIRCLE_M
    Me = CIRCLE_BODY + 2 * (CIRCLE_M + CIRCLE_I / CIRCLE_R**2)
    cruise = CIRCLE_R * CIRCLE_CRR * M * G  # R C_rr N, N the whole weight
    startup = CIRCLE_R * (CIRCLE_CRR * M * G + Me * CIRCLE_A)
    return startup, cruise


@pytest.fixture(scope="module")
def circle_runs():
    from ridesim.jobs.check import check_scenario
    from ridesim.jobs.simulate import simulate

    out = {}
    for coupled in (True, False):
        sc = circle_cart(coupled)
        out[coupled] = (check_scenario(sc).to_dict(), size_motor(sc).to_dict(),
                        simulate(sc).to_dict())
    return out


def test_newton_figure_of_the_issue():
    # The reproducer's own arithmetic: 0.2 (0.01 * 23 * 9.81 + 24.5 * 0.5) = 2.90 N m.
    startup, _ = circle_newton()
    assert round(startup, 2) == 2.90
    assert 0.2 * (0.01 * 23 * 9.81 + 24.5 * 0.5) == pytest.approx(startup, rel=1e-4)


@pytest.mark.parametrize("coupled", [True, False])
def test_circle_cart_one_torque_per_motor_in_every_command(circle_runs, coupled):
    """Coupled: one motor carries F R (2.90 N m at start-up); uncoupled: two motors, each half.

    Tolerances: check and size-motor evaluate the same closed-form model on the solved flat
    track (slope noise < 1e-10): 1e-8. The simulation's start-up figure is measured after
    run.settle_s = 1 s, when the speed loop's start transient (slowest pole -27.6 1/s, see
    ridesim.metrics.ride.DRIVE_SETTLE_S) has decayed by exp(-27.6) ~ 1e-12 and the loop
    tracks the ramp with no error (a PI loop on an inertia is type 2); its rolling resistance
    is the same C_rr N R torque. What is left is the contact solver's per-step error on a
    round wheel, far below 1e-4 of the torque: 1e-4. The cruise is measured 0.2 s after the
    ramp, when the loop's transient is below 0.5 % of the step from start-up to cruise
    torque, i.e. below 1.2e-2 / 0.45 of the cruise figure: 3e-3 on its r.m.s.
    """
    check, sizing, sim = circle_runs[coupled]
    startup, cruise = circle_newton()
    n_motors = 1 if coupled else 2
    per_startup, per_cruise = startup / n_motors, cruise / n_motors
    names = ["coupled train, axles 0+1"] if coupled else ["axle 0 shaft", "axle 1 shaft"]
    # Every command names the same motors.
    assert [m["name"] for m in check["motors"]] == names
    assert [m["name"] for m in sizing["motors"]] == names
    assert [m["name"] for m in sim["torque"]["motors"]] == names
    assert check["torque"]["per"] == sizing["per"] == sim["torque"]["per"] == "motor"
    # Start-up.
    ck, sz, sm = (check["torque"]["by_phase"], sizing["by_phase"], sim["torque"]["by_phase"])
    np.testing.assert_allclose(ck["startup"]["peak_Nm"], per_startup, rtol=1e-8)
    np.testing.assert_allclose(sz["startup"]["peak_Nm"], per_startup, rtol=1e-8)
    np.testing.assert_allclose(sm["startup"]["peak_Nm"], per_startup, rtol=1e-4)
    for m in sim["torque"]["motors"]:
        np.testing.assert_allclose(m["by_phase"]["startup"]["mean_Nm"], per_startup, rtol=1e-4)
    # The size-motor peak of the whole cycle is the start-up (braking at 0.5 m/s^2 needs
    # R (M_e b - C_rr M g) < F R): a motor bought from it is strong enough.
    np.testing.assert_allclose(sizing["peak_torque_Nm"], per_startup, rtol=1e-8)
    np.testing.assert_allclose(check["torque"]["peak_Nm"], per_startup, rtol=1e-8)
    # Cruise: R C_rr N per motor.
    np.testing.assert_allclose(ck["cruise"]["peak_Nm"], per_cruise, rtol=1e-8)
    np.testing.assert_allclose(ck["cruise"]["rms_Nm"], per_cruise, rtol=1e-8)
    np.testing.assert_allclose(sz["cruise"]["rms_Nm"], per_cruise, rtol=1e-8)
    np.testing.assert_allclose(sm["cruise"]["peak_Nm"], per_cruise, rtol=3e-3)
    np.testing.assert_allclose(sm["cruise"]["rms_Nm"], per_cruise, rtol=3e-3)
    # Shaft speed v / R and power T omega at the end of the start-up, per motor.
    np.testing.assert_allclose(sizing["max_shaft_speed_rad_s"], CIRCLE_V / CIRCLE_R, rtol=1e-12)
    np.testing.assert_allclose(ck["startup"]["peak_power_W"],
                               per_startup * CIRCLE_V / CIRCLE_R, rtol=2e-2)  # ramp sampled


def test_circle_cart_phase_windows_line_up(circle_runs):
    """All three commands put the start-up at 0 to v/a = 2 s; check and size-motor the braking
    at the end of the same cycle; the simulation (whose drive never brakes) has none."""
    check, sizing, sim = circle_runs[True]
    t_a = CIRCLE_V / CIRCLE_A
    for ph in (check["torque"]["by_phase"], sizing["by_phase"], sim["torque"]["by_phase"]):
        assert ph["startup"]["window_s"] == pytest.approx([0.0, t_a])
    assert check["torque"]["by_phase"]["braking"]["window_s"] == pytest.approx(
        sizing["by_phase"]["braking"]["window_s"])
    assert "braking" not in sim["torque"]["by_phase"]
    # The simulation says what it left out: run.settle_s and the drive settling after the ramp.
    sk = sim["torque"]["skipped"]
    np.testing.assert_allclose([s["window_s"] for s in sk], [[0.0, 1.0], [t_a, t_a + 0.2]])
    assert all(s["peak_Nm"] is not None for s in sk)


def test_speeds_are_si_in_json_and_rad_s_with_rpm_in_text():
    sc = circle_cart(False)
    from ridesim.jobs.check import check_scenario

    res = size_motor(sc.replace("motor.gear_ratios", [10.0]))
    d = res.to_dict()
    np.testing.assert_allclose(d["max_shaft_speed_rad_s"], CIRCLE_V / CIRCLE_R, rtol=1e-12)
    np.testing.assert_allclose(d["gears"][0]["motor_max_speed_rad_s"], 10 * CIRCLE_V / CIRCLE_R,
                               rtol=1e-12)
    # One unit per quantity in text: rad/s, with rpm = rad/s * 60 / (2 pi) in brackets.
    for text in (res.to_text(), check_scenario(sc).to_text()):
        assert "5 rad/s (47.7" in text or "5 rad/s (47.75" in text


@pytest.fixture(scope="module")
def trolley_runs():
    from pathlib import Path

    from ridesim.jobs.check import check_scenario
    from ridesim.jobs.simulate import simulate
    from ridesim.scenario.load import load_scenario

    sc = load_scenario(Path(__file__).resolve().parents[1] / "scenarios" / "hexagon_trolley.toml")
    return sc, check_scenario(sc).to_dict(), size_motor(sc).to_dict(), simulate(sc).to_dict()


def test_demo_trolley_phases_line_up_across_commands(trolley_runs):
    """The demo trolley (two uncoupled driven axles: two motors) in check, size-motor, simulate.

    Cruise, per motor, closed forms for a regular n-gon of apothem a on its catenary track
    at steady speed v (L. Hall & S. Wagon, "Roads and Wheels", Math. Mag. 65(5), 1992; the
    torque is the wheel's own I alpha, derived in test_assess_analytic): peak
    I v^2 sin(2 pi/n) / (2 a^2), r.m.s. I v^2/a^2 sqrt(sin^3(pi/n) / (3 asinh(tan(pi/n)))).
    The plate is 18 mm plywood at 600 kg/m^3, area n a^2 tan(pi/n), inertia about its centre
    m R^2 (1 + 2 cos^2(pi/n)) / 6 with R = a / cos(pi/n) (regular polygon lamina, e.g.
    Meriam & Kraige, "Engineering Mechanics: Dynamics", tables [memory]).

    check and size-motor are the same analytic model: the same start-up and braking (same
    duty cycle from the same pose) to round-off; size-motor samples its 20 s cruise at 64
    points a track period, so its cruise r.m.s. is the exact one to within 1 %.

    The simulation differs from that model in two ways it states itself: its contacts lose a
    little energy, like a rolling resistance of C_rr 0.001 to 0.006 (simulate's caution), a
    mean torque of at most 0.006 N r_mean per motor (N the axle's load, r_mean = L / 2 pi);
    and its wheel corners are rounded (2 % of the least radius by default) and strike the
    next flank at each cusp, which the exact model leaves out (check's note). So its cruise
    mean lies in that band, its peaks sit within that bound of the analytic ones, and the
    ripple about its mean (the r.m.s. less the mean) is the analytic r.m.s. plus the corner
    strikes: within 25 %.
    """
    sc, check, sizing, sim = trolley_runs
    n, a, v = 6, 0.12, 0.4
    mass = 600.0 * 0.018 * n * a * a * math.tan(math.pi / n)
    R = a / math.cos(math.pi / n)
    inertia = mass * R * R * (1 + 2 * math.cos(math.pi / n) ** 2) / 6
    scale = inertia * v * v / (a * a)
    peak = 0.5 * math.sin(2 * math.pi / n) * scale
    rms = math.sqrt(math.sin(math.pi / n) ** 3 / (3 * math.asinh(math.tan(math.pi / n)))) * scale
    ck, sz, sm = check["torque"]["by_phase"], sizing["by_phase"], sim["torque"]["by_phase"]
    names = ["axle 0 shaft", "axle 1 shaft"]
    assert [m["name"] for m in check["motors"]] == names == [m["name"] for m in sizing["motors"]]
    assert [m["name"] for m in sim["torque"]["motors"]] == names
    # The same phases, each with its window: start-up 0 to v/a = 2 s in all three.
    assert set(ck) == set(sz) == {"startup", "cruise", "braking"}
    assert set(sm) == {"startup", "cruise"}
    for ph in (ck, sz, sm):
        np.testing.assert_allclose(ph["startup"]["window_s"], [0.0, v / 0.2])
    np.testing.assert_allclose(ck["braking"]["window_s"], sz["braking"]["window_s"])
    for key in ("startup", "braking"):
        for fig in ("peak_Nm", "rms_Nm"):
            np.testing.assert_allclose(ck[key][fig], sz[key][fig], rtol=1e-12)
    # Cruise: the closed forms.
    np.testing.assert_allclose(ck["cruise"]["peak_Nm"], peak, rtol=1e-8)
    np.testing.assert_allclose(ck["cruise"]["rms_Nm"], rms, rtol=1e-9)
    np.testing.assert_allclose(sz["cruise"]["peak_Nm"], peak, rtol=1e-8)
    np.testing.assert_allclose(sz["cruise"]["rms_Nm"], rms, rtol=1e-2)
    # The simulation, within its stated differences.
    load = (sc.vehicle.body_mass_kg / 2 + mass) * G
    r_mean = 2 * n * a * math.asinh(math.tan(math.pi / n)) / (2 * math.pi)
    loss_max = 0.006 * load * r_mean
    c = sm["cruise"]
    assert 0.0 <= c["mean_Nm"] <= loss_max
    np.testing.assert_allclose(math.sqrt(c["rms_Nm"] ** 2 - c["mean_Nm"] ** 2), rms, rtol=0.25)
    assert abs(c["peak_Nm"] - peak) <= loss_max
    assert abs(sm["startup"]["peak_Nm"] - ck["startup"]["peak_Nm"]) <= loss_max
    # What the simulation left out is stated, with the torque reached there.
    assert [s["window_s"][0] for s in sim["torque"]["skipped"]] == [0.0, v / 0.2]
