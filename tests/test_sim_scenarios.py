"""Whole simulations: square wheels on their track, the demo scenarios, drives, guard rails.

References: a square wheel rolls on inverted catenaries with its axle level (Hall & Wagon,
"Roads and Wheels", Mathematics Magazine 65(5):283-301, 1992); the flank of those arches
slopes at 45 degrees at the cusps, so rolling needs friction of at least tan(pi/4) = 1 there
(the contact force is vertical at steady speed); at constant shaft speed the ground speed is
``v = r(theta) omega``, so a regular n-gon surges by ``sec(pi/n)`` (REFERENCES.md, derived
from ``dx = r dtheta``); energy conservation: with no losses the mean shaft torque over whole
periods of a steady ride is zero. The analytic model of ``ridesim.assess.analytic`` is an
independent closed-form computation of the same loads.
"""

import math

import numpy as np
import pytest

import ridesim as rs
from ridesim.errors import SimulationError
from ridesim.jobs.simulate import simulate
from ridesim.metrics import ride
from ridesim.scenario.build import solve_scenario, wheel_mass
from ridesim.scenario.load import load_scenario, scenario_from_dict
from ridesim.sim.run import PymunkEngine
from ridesim.sim.world import STANDARD_GRAVITY_M_S2 as G

A = 0.3
DEMOS = ["hexagon_trolley", "ellipse_pull_toy", "wave_track_sculpture", "drawn_blob_cart"]


def square(mu, seconds=2.0, **vehicle):
    v = {"body_mass_kg": 10.0, "axles": 1}
    v.update(vehicle)
    return scenario_from_dict({
        "wheel": {"shape": "polygon", "sides": 4, "apothem_m": A},
        "vehicle": v,
        "drive": {"mode": "speed", "speed_m_s": 0.5},
        "surface": {"friction": mu},
        "run": {"duration_s": seconds, "timestep_s": 0.001, "settle_s": min(0.5, 0.5 * seconds)},
    })


def test_square_wheel_with_ample_friction_rides_level_without_slip():
    # mu = 1.5 is 50 % above the demand tan(pi/4) = 1 at the cusps.
    r = simulate(square(1.5))
    assert r.axle_bounce_m < 0.01 * A
    assert r.slip_onset_time_s is None
    assert not r.contact_lost
    np.testing.assert_allclose(r.speed["mean_m_s"], 0.5, rtol=0.01)


def test_square_wheel_slips_below_the_cusp_friction():
    # mu = 0.5 is half of tan(pi/4): the wheel cannot climb out of a cusp without slipping.
    r = simulate(square(0.5))
    assert r.slip_onset_time_s is not None
    assert r.max_slip_speed_m_s > 10 * r.slip_threshold_m_s


def test_square_wheel_contact_sits_below_the_axle_and_carries_the_catenary_normal_load():
    """Probe decoding against the geometry of the ideal pair (Hall & Wagon 1992).

    The contact point lies straight below the axle (``r = -y``). At steady speed with a level
    axle no body accelerates, so the track pushes straight up with the whole weight ``W``; the
    normal component is ``W cos(phi)``, with ``tan(phi) = sinh(x/a)`` the arch slope at the
    contact, so ``cos(phi) = sech(x/a)``. At constant speed the time average over whole arches
    is the space average: ``(1/2U) integral_{-U}^{U} sech(u) du = pi / (4 asinh 1)``
    (``U = asinh 1``, ``integral sech = 2 atan(e^u)``), 0.8911.
    """
    period_s = 2 * A * math.asinh(1.0) / 0.5
    r = simulate(square(1.5, seconds=0.5 + 2 * period_s))
    p = r.probes
    s = (p.time_s > 0.5) & (p.time_s <= 0.5 + 2 * period_s)
    below = np.abs(p.contact_x_m[s, 0] - p.axle_x_m[s, 0])
    # Away from the hand-overs at the cusps (a corner-rounded vertex rocks across), within 1 % of a.
    assert np.mean(below < 0.01 * A) > 0.95
    w = (p.info["body_mass_kg"] + p.info["wheel_mass_kg"]) * G
    np.testing.assert_allclose(np.mean(p.normal_force_N[s, 0]) / w, math.pi / (4 * math.asinh(1.0)),
                               rtol=0.005)


@pytest.mark.parametrize("sides", [4, 6, 8])
def test_grip_limit_of_a_regular_polygon_is_tan_pi_over_n(sides):
    """At steady speed with a level axle nothing accelerates, so the contact force is vertical
    and the wheel needs friction tan(phi) where the track slopes by phi; the arches are steepest
    at the cusps, phi = pi/n (Hall & Wagon 1992). 5 % above tan(pi/n) the simulated wheel does
    not slip; 5 % below it slips in short bursts at the cusps (too short for a slip onset, which
    needs 20 ms, so the brief-slip figures carry it); 15 % below it loses grip."""
    crit = math.tan(math.pi / sides)

    def scenario(factor):
        return scenario_from_dict({
            "wheel": {"shape": "polygon", "sides": sides, "apothem_m": 0.15},
            "vehicle": {"body_mass_kg": 5.0, "axles": 1},
            "drive": {"mode": "speed", "speed_m_s": 0.3},
            "surface": {"friction": factor * crit},
            "run": {"duration_s": 3.0, "settle_s": 0.5},
        })

    grips = simulate(scenario(1.05))
    bursts = simulate(scenario(0.95))
    # Above the limit at most a step or two of scrub where the square's corner strikes the next
    # arch (1 ms measured; none for the hexagon and octagon); below it tens of milliseconds.
    assert grips.slip_onset_time_s is None and grips.slip_time_s <= 0.002
    assert bursts.slip_time_s > 0.01 and bursts.slip_distance_m > 1e-4
    assert grips.slip_time_s < 0.1 * bursts.slip_time_s
    assert "rim scrub" in bursts.to_text()
    # Every burst within a tenth of a period of a cusp.
    p = bursts.probes
    over = np.nan_to_num(np.abs(ride.slip_speed_filtered(p))[:, 0]) > bursts.slip_threshold_m_s
    over &= ride.settled(p)
    pair = solve_scenario(scenario(0.95))
    phase = np.mod(p.axle_x_m[over, 0] - pair.cusps[0].x_m, pair.track.period) / pair.track.period
    assert np.all(np.minimum(phase, 1.0 - phase) < 0.1)
    loses = simulate(scenario(0.85))
    assert loses.slip_onset_time_s is not None


def test_two_axle_square_cart_stays_level():
    # Wheelbase of two track periods: both wheels in the same phase, so the body neither pitches
    # nor bounces more than one wheel alone.
    r = simulate(square(1.5, axles=2, wheelbase_m=2 * 2 * A * math.asinh(1.0)))
    assert r.axle_bounce_m < 0.01 * A
    assert np.ptp(r.probes.pitch_rad[ride.settled(r.probes)]) < 1e-3
    assert r.slip_onset_time_s is None


@pytest.mark.parametrize("name", DEMOS)
def test_demo_scenarios_run_briefly_with_finite_metrics(name):
    sc = load_scenario(f"scenarios/{name}.toml").replace_many({"run.duration_s": 1.0,
                                                               "run.settle_s": 0.3})
    r = simulate(sc)
    d = r.to_dict()
    for key in ("axle_bounce_m",):
        assert math.isfinite(d[key])
    assert math.isfinite(d["slip"]["max_slip_speed_m_s"])
    assert all(math.isfinite(d["torque"][k]) for k in ("peak_Nm", "rms_Nm", "peak_raw_Nm"))
    assert all(math.isfinite(d["speed"][k]) for k in ("mean_m_s", "final_m_s"))
    assert d["steps"] == round(1.0 / sc.run.timestep_s)
    assert d["axle_bounce_m"] < 0.05 * sc_r_min(sc)


def sc_r_min(sc):
    return solve_scenario(sc).wheel.extremes()[0]


def test_ellipse_toy_bounce_shrinks_with_the_timestep_towards_the_ideal_zero():
    """An ideal pair keeps its axle exactly level (Hall & Wagon 1992): the analytic bounce is 0.

    The simulated bounce of the smooth ellipse-about-a-focus toy is the time-stepping error of
    the contact solver: a periodic axle-height error at the track period that shrinks as the
    step shrinks (about 0.23, 0.12 and 0.05 mm at 0.5, 0.25 and 0.125 ms when measured).
    """
    base = load_scenario("scenarios/ellipse_pull_toy.toml")
    bounce = [simulate(base.replace_many({"run.duration_s": 3.0, "run.settle_s": 1.0,
                                          "run.timestep_s": dt})).axle_bounce_m
              for dt in (5e-4, 2.5e-4, 1.25e-4)]
    assert bounce[0] > bounce[1] > bounce[2]
    assert bounce[2] < 0.3 * bounce[0]
    assert bounce[2] < 1e-4  # 0.1 mm on a wheel of 20 to 80 mm radius


@pytest.mark.parametrize("name", DEMOS)
def test_torque_against_the_analytic_model(name):
    """Shaft torque over the track period at steady speed, simulated and analytic.

    The simulated torque (10 ms average) is averaged in 40 bins of the vehicle's position
    within a track period over three or more periods; the analytic torque is binned the same
    way. Two parts are compared:

    * the fluctuation (RMS about the mean): within 10 %;
    * the mean. Energy conservation puts the analytic mean at zero; the engine loses a
      little energy at its contacts (the solver hands the load between the straight pieces of
      track and wheel outlines with small inelastic impulses, and the contact friction creeps
      by a fraction of a millimetre per second; the loss halves with the timestep, see
      test_the_engines_contact_losses_are_a_timestep_effect). That loss shows as a small positive mean
      torque, an equivalent rolling-resistance coefficient of 0.001 to 0.006 on these demos,
      bounded here by 0.01 (mean torque below 0.01 x wheel load x mean radius): no more than
      a car tyre on concrete, 0.01 to 0.015 (REFERENCES.md, engineering tables).
    """
    from ridesim.assess.analytic import analyze_cycle

    sc = load_scenario(f"scenarios/{name}.toml")
    pair = solve_scenario(sc)
    P = pair.track.period
    v = sc.drive.speed_m_s
    settle = 1.0
    duration = settle + max(3.0 * P / v, 2.0)
    sc = sc.replace_many({"drive.accel_m_s2": 0.0, "run.duration_s": round(duration, 3),
                          "run.settle_s": settle})
    mp = wheel_mass(sc, pair.wheel)
    an = analyze_cycle(pair, vehicle=sc.vehicle, surface=sc.surface, wheel_mass=mp, drive=sc.drive)
    eng = PymunkEngine.from_scenario(sc, pair)
    p = eng.run()
    m = ride.settled(p)
    axle = an.driven[0]
    shaft = [i for i, ax in enumerate(p.shaft_axles) if axle in ax][0]
    xs = np.mod(p.axle_x_m[m, axle] - eng.world.offsets_m[axle], P)
    ts = ride.moving_average(p.shaft_torque_Nm[:, shaft], 10)[m]
    xa = np.mod(an.x_m, P)
    ta = an.torque_Nm[axle]
    bins = np.linspace(0.0, P, 41)
    sim_b = np.array([ts[(xs >= a) & (xs < b)].mean() for a, b in zip(bins[:-1], bins[1:], strict=True)])
    an_b = np.array([ta[(xa >= a) & (xa < b)].mean() for a, b in zip(bins[:-1], bins[1:], strict=True)])
    np.testing.assert_allclose(np.std(sim_b), np.std(an_b), rtol=0.10)
    # Zero by energy conservation, to the sampled mean's accuracy: spectral for the analytic
    # demo wheels, algebraic for the drawn blob (a cubic spline: its third derivative jumps at
    # each of its 90 points), so the bound is relative to the torque's size.
    np.testing.assert_allclose(an.torque_mean_Nm, 0.0, atol=max(1e-9, 1e-5 * float(np.max(np.abs(ta)))))
    weight = (eng.world.body_mass_kg + len(eng.world.wheels) * mp.mass_kg) * G
    r_mean = pair.revolution_length / (2 * math.pi)
    share = weight / len(eng.world.wheels) * len(p.shaft_axles[shaft])
    assert 0.0 <= float(np.mean(ts)) < 0.01 * share * r_mean


def _loss_coefficient(wheel, dt):
    """Mean drive power over weight x speed at steady speed: an equivalent rolling-resistance
    coefficient of the engine's own losses (work-energy theorem: 0 for a lossless rigid wheel
    rolling without slip at steady speed; Halliday, Resnick & Walker [memory])."""
    sc = scenario_from_dict({
        "wheel": wheel, "vehicle": {"body_mass_kg": 10.0, "axles": 1},
        "drive": {"mode": "speed", "speed_m_s": 0.5}, "surface": {"friction": 1.0},
        "run": {"duration_s": 4.0, "timestep_s": dt, "settle_s": 1.0},
    })
    p = simulate(sc).probes
    s = p.time_s > 1.0
    power = np.mean(p.shaft_torque_Nm[s, 0] * np.abs(p.wheel_rate_rad_s[s, 0]))
    weight = (p.info["body_mass_kg"] + p.info["wheel_mass_kg"]) * G
    return power / (weight * np.mean(p.speed_m_s[s]))


def test_the_engines_contact_losses_are_a_timestep_effect():
    """A circle on a flat track loses nothing; a wheel whose contact point travels round its rim
    (an ellipse about its focus) loses a little energy to the contact solver, and the loss
    halves with the step (first-order time stepping): 0.0030 at 1 ms, 0.0016 at 0.5 ms when
    measured, like a rolling-resistance coefficient."""
    circle = {"shape": "circle", "radius_m": 0.15}
    assert abs(_loss_coefficient(circle, 1e-3)) < 1e-6
    ellipse = {"shape": "ellipse", "semi_axes_m": [0.15, 0.12], "axle_m": [0.09, 0.0]}
    coarse, fine = _loss_coefficient(ellipse, 1e-3), _loss_coefficient(ellipse, 5e-4)
    assert 0.0 < fine < 0.7 * coarse < 0.01


def test_constant_shaft_speed_surges_by_sec_pi_over_n():
    n, a, w = 6, 0.12, 3.0
    sc = scenario_from_dict({
        "wheel": {"shape": "polygon", "sides": n, "apothem_m": a},
        "vehicle": {"body_mass_kg": 5.0, "axles": 1},
        "drive": {"mode": "shaft_speed", "shaft_speed_rad_s": w, "max_torque_Nm": 50.0},
        "surface": {"friction": 1.2},
        "run": {"duration_s": 1.5, "settle_s": 0.3},
    })
    r = simulate(sc)
    v = ride.moving_average(r.probes.speed_m_s, 5)[ride.settled(r.probes)]
    # v = r omega between r_min = a and r_max = a sec(pi/n); 5-step averaging and the rounded
    # corners trim the extremes slightly.
    np.testing.assert_allclose(v.max() / v.min(), 1.0 / math.cos(math.pi / n), rtol=0.02)
    np.testing.assert_allclose(v.min(), a * w, rtol=0.02)
    # The motor holds the shaft speed within its torque limit; at the cusps, where a corner
    # seats, it yields by up to about 1 % for a step or two.
    rate = r.probes.wheel_rate_rad_s[ride.settled(r.probes), 0]
    np.testing.assert_allclose(rate.mean(), w, rtol=1e-3)
    np.testing.assert_allclose(rate, w, rtol=0.02)


def test_coupled_axles_turn_as_one_shaft():
    P = 2 * A * math.asinh(1.0)
    sc = square(1.5, seconds=1.0, axles=2, wheelbase_m=1.5 * P, coupled=True)
    r = simulate(sc)
    ang = r.probes.wheel_angle_rad
    d = ang[:, 1] - ang[:, 0]
    np.testing.assert_allclose(d, d[0], atol=1e-4)
    assert r.probes.shaft_axles == ((0, 1),)
    assert any("common shaft" in c for c in r.cautions)


def test_progress_is_reported_up_to_one():
    seen = []
    simulate(square(1.5, seconds=0.5), progress=seen.append)
    assert seen and seen[-1] == pytest.approx(1.0)
    assert all(b >= a for a, b in zip(seen, seen[1:], strict=False))


def test_tunnelling_stops_with_a_fix_in_the_message():
    # A 50 kg body on a 2 cm wheel, 20 ms steps and 2 solver iterations: the wheel sinks through.
    sc = scenario_from_dict({
        "wheel": {"shape": "circle", "radius_m": 0.02},
        "vehicle": {"body_mass_kg": 50.0, "axles": 1},
        "drive": {"mode": "torque", "torque_Nm": 1.0},
        "surface": {"friction": 1.0},
        "run": {"duration_s": 1.0, "timestep_s": 0.02, "settle_s": 0.1, "iterations": 2},
    })
    with pytest.raises(SimulationError) as info:
        simulate(sc)
    msg = str(info.value)
    assert "\n" not in msg
    assert "timestep_s" in msg and "iterations" in msg and "through the track" in msg


def test_csv_of_a_run(tmp_path):
    r = simulate(square(1.5, seconds=0.3))
    from ridesim.jobs.simulate import write_probes

    path = write_probes(r, tmp_path / "run.csv")
    data = np.loadtxt(path, delimiter=",", skiprows=1)
    assert data.shape == (300, len(r.probes.columns()))
    np.testing.assert_allclose(data[:, 0], r.probes.time_s, rtol=1e-8)


def test_rolling_resistance_is_met_by_the_speed_drive():
    # Rolling resistance F = C_rr N at each wheel (Gillespie, "Fundamentals of Vehicle Dynamics",
    # 1992 [memory]); on round wheels at steady speed each of n driven shafts supplies
    # T = C_rr (M g / n) r when the wheels share the load equally.
    crr, r = 0.02, 0.1
    sc = scenario_from_dict({
        "wheel": {"shape": "circle", "radius_m": r},
        "vehicle": {"body_mass_kg": 6.0, "axles": 2, "wheelbase_m": 0.4},
        "drive": {"mode": "speed", "speed_m_s": 0.5},
        "surface": {"friction": 0.8, "rolling_resistance": crr},
        "run": {"duration_s": 1.5, "settle_s": 0.5},
    })
    res = simulate(sc)
    w = res.probes.info
    M = 6.0 + 2 * w["wheel_mass_kg"]
    expected = crr * M * G / 2 * r
    for t in res.torque:
        np.testing.assert_allclose(t["mean_Nm"], expected, rtol=0.02)
    np.testing.assert_allclose(res.speed["mean_m_s"], 0.5, rtol=1e-3)


def test_a_wheel_spun_without_grip_stops_the_run():
    # 20 N m on a 0.1 m wheel with friction 0.1 under a 6 kg cart: the rim can pass at most
    # 0.1 x 6 x 9.8 x 0.1 = 0.6 N m; the rest spins the wheel up without bound.
    sc = scenario_from_dict({
        "wheel": {"shape": "circle", "radius_m": 0.1},
        "vehicle": {"body_mass_kg": 5.0, "axles": 1},
        "drive": {"mode": "torque", "torque_Nm": 20.0},
        "surface": {"friction": 0.1},
        "run": {"duration_s": 3.0, "settle_s": 0.1},
    })
    with pytest.raises(SimulationError, match="without grip"):
        simulate(sc)


def test_a_triangle_wheel_jams_and_the_speed_drive_reports_a_stall():
    """An equilateral triangle's vertex hits the next arch before it seats (Hall & Wagon 1992:
    regular wheels need at least four sides), so the cart cannot keep its speed: the drive sits
    at its torque limit and the result says the vehicle stalled. A square on its arches, with
    friction above tan(pi/4), keeps its speed well inside the limit."""
    def run(sides, mu):
        return simulate(scenario_from_dict({
            "wheel": {"shape": "polygon", "sides": sides, "apothem_m": 0.2},
            "vehicle": {"body_mass_kg": 5.0, "axles": 1},
            "drive": {"mode": "speed", "speed_m_s": 0.3, "max_torque_Nm": 10.0},
            "surface": {"friction": mu},
            "run": {"duration_s": 2.0, "settle_s": 0.5},
        }))

    tri = run(3, 1.2)
    assert tri.drive["stalled"] and "target" in tri.drive["stall_reason"]
    assert tri.drive["at_limit_pct"] > 90.0
    assert "STALLED" in tri.to_text()
    sq = run(4, 1.5)
    assert not sq.drive["stalled"] and sq.drive["at_limit_pct"] == 0.0


@pytest.mark.parametrize("ratio, stalls", [(0.5, True), (2.0, False)])
def test_a_torque_below_the_rolling_resistance_does_not_move_the_cart(ratio, stalls):
    """Rolling resistance C_rr N at the rim (Gillespie 1992 [memory]) needs T = C_rr N r on a
    round wheel to start rolling: half of it leaves the cart standing, twice it moves it."""
    crr, r = 0.05, 0.1
    sc = scenario_from_dict({
        "wheel": {"shape": "circle", "radius_m": r},
        "vehicle": {"body_mass_kg": 6.0, "axles": 1},
        "drive": {"mode": "torque", "torque_Nm": 1.0},
        "surface": {"friction": 0.8, "rolling_resistance": crr},
        "run": {"duration_s": 1.0, "settle_s": 0.3},
    })
    w = PymunkEngine.from_scenario(sc).world
    t_start = crr * (w.body_mass_kg + w.wheel_mass_kg) * G * r
    res = simulate(sc.replace_many({"drive.torque_Nm": ratio * t_start}))
    assert res.drive["stalled"] is stalls


def test_rounded_corners_ride_level_on_the_track_solved_for_them():
    """A square with 15 mm corners (5 % of its apothem) on the track solved for sharp corners
    dips at every cusp (the corner cannot reach the cusp's bottom) and rocks out of phase; on
    the track solved for the rounded wheel, an ideal pair, the axle stays level (Hall &
    Wagon 1992) up to the solver's own error. The engine builds the rounded wheel exactly
    (a pymunk polygon with that corner radius), not as facets."""
    sc = square(1.5, seconds=3.0).replace_many({"wheel.corner_radius_m": 0.015})
    on_sharp = simulate(sc)
    assert any("solved for sharp corners" in c for c in on_sharp.cautions)
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=A, corner_radius=0.015))
    eng = PymunkEngine(sc, pair, wheel_mass(sc, pair.wheel))
    on_rounded = ride.SimResult.from_probes(eng.run())
    assert eng.world.corner_radius_m == 0.015 and eng.world.wheel_error_m == 0.0
    assert on_rounded.axle_bounce_m < 0.2e-3
    assert on_rounded.axle_bounce_m < 0.3 * on_sharp.axle_bounce_m
    # The scenario key does the same.
    fitted = simulate(sc.replace_many({"wheel.fit_track_to_corners": True}))
    assert fitted.axle_bounce_m == on_rounded.axle_bounce_m
    assert not any("solved for sharp corners" in c for c in fitted.cautions)
