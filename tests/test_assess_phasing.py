"""Cart phasing: resting axle height of a turned wheel, and coupled wheelbases."""

import math

import numpy as np
import pytest

import ridesim as rs
from ridesim.assess.phasing import cart_phasing, resting_height
from ridesim.assess.wording import describe
from ridesim.scenario.load import VehicleSpec


def test_ideal_pose_rests_at_axle_height_zero():
    # r = -y straight below the axle and no interference for a square (Hall & Wagon,
    # "Roads and Wheels", 1992): the ideal pose rests exactly on the axle line.
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=0.3))
    x = np.linspace(-0.4, 1.3, 97)
    h = resting_height(pair, x, pair.wheel_angle(x))
    np.testing.assert_allclose(h, 0.0, atol=1e-9)


@pytest.mark.parametrize("delta", [0.01, 0.05, 0.1])
def test_square_turned_on_the_arch_top_rests_higher(delta):
    """Square of apothem a at x = 0 (arch top), turned delta past its ideal angle 0.

    Its bottom face is the line Y = h - (a + X sin d)/cos d. It touches the arch
    y = -a cosh(X/a) where the slopes agree, sinh(X/a) = tan d, i.e. X* = a asinh(tan d),
    cosh = sec d. Setting the gap to zero there gives the resting height
        h = a tan(d) asinh(tan(d))     (derived; ~ a d^2 for small d).
    """
    a = 0.3
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=a))
    h = resting_height(pair, np.array([0.0]), np.array([delta]))[0]
    # The touching point is refined between rim samples by golden section: 1e-9 m.
    assert h == pytest.approx(a * math.tan(delta) * math.asinh(math.tan(delta)), abs=1e-9)


def test_whole_period_wheelbase_coupled_rides_level():
    a, n = 0.12, 6
    pair = rs.track_for(rs.Wheel.polygon(sides=n, apothem=a))
    P = pair.track.period
    v = VehicleSpec(axles=2, wheelbase_m=3 * P, coupled=True, seat_m=(0.1, 0.3))
    res = cart_phasing(pair, v)
    assert res.wheelbase_periods == pytest.approx(3.0)
    assert res.phase_error_rad.max() <= 1e-9
    assert res.bounce_m <= 1e-9 and res.pitch_range_rad <= 1e-9 and res.seat_bounce_m <= 1e-9
    np.testing.assert_allclose(res.load_share, [0.5, 0.5], atol=1e-12)  # lever rule, COM midway
    assert not res.findings


def test_half_period_wheelbase_coupled_bounces_and_says_so():
    a, n = 0.12, 6
    pair = rs.track_for(rs.Wheel.polygon(sides=n, apothem=a))
    P = pair.track.period
    coupled = cart_phasing(pair, VehicleSpec(axles=2, wheelbase_m=2.5 * P, coupled=True),
                           speed_m_s=0.4)
    # Closed form of the hexagon's angle on its arches (Hall & Wagon 1992): on the arch
    # centred at kP, theta(x) = k*2pi/n + atan(sinh((x - kP)/a)). The coupled front wheel
    # keeps its assembly angle relative to the rear one, so its error is
    # [theta(x + wb) - theta(x)] - [theta(wb) - theta(0)], largest over the cycle.
    def theta(x):
        k = np.round(x / P)
        return k * 2 * math.pi / n + np.arctan(np.sinh((x - k * P) / a))

    wb = 2.5 * P
    x = np.linspace(0.0, n * P, 720, endpoint=False) - 1.25 * P  # chassis origin midway
    err = np.abs(theta(x + wb) - theta(x) - (theta(wb - 1.25 * P) - theta(-1.25 * P)))
    assert coupled.phase_error_rad[1] == pytest.approx(err.max(), rel=1e-9)
    assert coupled.bounce_m > 1e-3 and coupled.pitch_range_rad > 0
    assert [f.code for f in coupled.findings] == ["wheelbase_out_of_phase"]
    assert "not a whole number" in describe(coupled.findings[0])
    free = cart_phasing(pair, VehicleSpec(axles=2, wheelbase_m=2.5 * P, coupled=False))
    assert free.bounce_m <= 1e-9 and free.phase_error_rad.max() == 0.0
    assert [f.code for f in free.findings] == ["wheelbase_uncoupled_rates"]
    assert "own motor" in describe(free.findings[0])


def test_mounting_error_costs_bounce_like_the_closed_form():
    # One axle, a square, mounted delta off: at the arch top the axle sits at
    # a tan(d) asinh(tan(d)) (derived above), and the ride's bounce is at least that.
    a, d = 0.3, 0.05
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=a))
    res = cart_phasing(pair, VehicleSpec(axles=1, coupled=True), phase_offsets_rad=[d])
    assert res.bounce_m >= a * math.tan(d) * math.asinh(math.tan(d)) * 0.99


def test_scenario_mounting_error_reaches_the_verdict():
    from ridesim.jobs.check import check_scenario
    from ridesim.scenario.load import load_scenario

    sc = load_scenario("scenarios/hexagon_trolley.toml").replace_many(
        {"vehicle.coupled": True, "vehicle.phase_offsets_rad": [0.0, 0.02]})
    d = check_scenario(sc).to_dict()
    assert d["cart"]["bounce_m"] > 1e-4  # in phase it is below 1e-9 (test above)
    assert any("mounting errors" in n for n in d["notes"])


def turned_square_height(x, a, d):
    """Resting axle height of a square (apothem a) turned d past its ideal angle, axle at x on
    the arch whose crest is at 0, while the bottom face carries it.

    The ideal face is tangent to y = -a cosh(X/a) below the axle, slope -sinh(x/a); turned d
    clockwise its slope angle is atan(-sinh(x/a)) - d, so it touches where
    sinh(u_t) = tan(atan(sinh(x/a)) + d), X = a u_t. The axle stands a cosh(u_t) straight above
    that tangent line (distance a at slope angle phi_t, sec(phi_t) = cosh(u_t)), which puts it
    at h = sinh(u_t) (a u_t - x) (derived from Hall & Wagon's arch; at x = 0 it is the
    a tan(d) asinh(tan(d)) above).
    """
    s = np.tan(np.arctan(np.sinh(x / a)) + d)
    return s * (a * np.arcsinh(s) - x)


def test_turned_square_rests_on_its_face_like_the_closed_form_along_the_arch():
    a, d = 0.3, 0.03
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=a))
    P = pair.track.period
    res = cart_phasing(pair, VehicleSpec(axles=1, coupled=True), phase_offsets_rad=[d],
                       samples=1440)
    x = res.x_m
    k = np.round(x / P)
    mid = np.abs(x - k * P) < 0.25 * P  # the face carries the wheel; a vertex may near the cusps
    np.testing.assert_allclose(res.seat_height_m[mid],
                               turned_square_height(x[mid] - k[mid] * P, a, d), atol=2e-9)


@pytest.mark.parametrize("f_hz, expected", [(3.0, 1.0), (60.0, 1.0), (120.0, 0.0)])
def test_band_limited_seat_acceleration_of_a_sine(f_hz, expected):
    """h = A cos(2 pi f t) has peak acceleration A (2 pi f)^2 (simple harmonic motion:
    Halliday, Resnick & Walker, "Fundamentals of Physics" [memory]); harmonics above the
    ISO 2631-1 band's 80 Hz are dropped."""
    from ridesim.assess.phasing import SEAT_BAND_HZ, band_limited_peak_accel

    amp, period = 1e-3, 1.0
    t = np.arange(1024) / 1024 * period
    h = amp * np.cos(2 * np.pi * f_hz * t + 0.3) + 0.02  # a phase and an offset change nothing
    peak = band_limited_peak_accel(h, period, SEAT_BAND_HZ)
    np.testing.assert_allclose(peak, expected * amp * (2 * np.pi * f_hz) ** 2, rtol=1e-3, atol=1e-9)


def test_seat_acceleration_of_a_knocking_cart_does_not_grow_with_the_samples():
    """A square mounted 0.02 rad off on a shared shaft knocks where its corner meets the next
    arch: a kink in the seat height, whose raw second difference grows as 1/dx (4.3 m/s^2 at
    360 samples, 307 m/s^2 at 11520 when measured). Cut at the ISO 2631-1 band the estimate
    stays put as the samples grow."""
    a = 0.3
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=a))
    v = VehicleSpec(axles=2, wheelbase_m=2 * pair.track.period, coupled=True)
    peaks = [cart_phasing(pair, v, speed_m_s=0.5, phase_offsets_rad=[0.0, 0.02],
                          samples=n).seat_accel_peak_m_s2 for n in (2048, 8192)]
    assert peaks[0] > 1.0  # a knock, not a smooth ride
    np.testing.assert_allclose(peaks[0], peaks[1], rtol=0.03)


# ------------------------------------------------------------------ the wheelbase, judged


def square_rest_height(x, a, d):
    """Exact quasi-static resting height of a square (apothem a) turned ``d`` clockwise past
    its ideal angle with the axle at ``x``, on the catenary arches y = -a cosh((X - kP)/a),
    P = 2 a asinh(1) (Hall & Wagon, "Roads and Wheels", Math. Mag. 65, 1992).

    In the ideal pose the bottom face is tangent to the arch straight below the axle (slope
    angle psi = atan(-sinh(u/a)), u = x - kP), its foot at distance a. The lowest height that
    keeps the outline on or above the track is the largest of y(x + p_x) - p_y over the rim;
    along each face that is concave on each arch (y is concave, the face straight), so its
    largest value is at a vertex, at a cusp under the face, or where the arch's slope equals
    the face's, -sinh((X - kP)/a) = e_y / e_x (derived).
    """
    P = 2 * a * math.asinh(1.0)

    def y(X):
        k = np.round(X / P)
        return -a * np.cosh((X - k * P) / a)

    u = x - round(x / P) * P
    psi = math.atan(-math.sinh(u / a))
    e = np.array([math.cos(psi), math.sin(psi)])
    foot = a * np.array([math.sin(psi), -math.cos(psi)])
    c, s = math.cos(d), math.sin(d)
    rot = np.array([[c, s], [-s, c]])  # clockwise by d
    V = [rot @ v for v in (foot - a * e, foot + a * e, -foot + a * e, -foot - a * e)]
    best = max(float(y(x + v[0])) - v[1] for v in V)
    for j in range(4):
        A, B = V[j], V[(j + 1) % 4]
        ex, ey = B - A
        if abs(ex) < 1e-12:
            continue
        lo, hi = sorted((x + A[0], x + B[0]))
        ks = range(math.floor(lo / P) - 1, math.ceil(hi / P) + 2)
        for X in [(k + 0.5) * P for k in ks] + [k * P - a * math.asinh(ey / ex) for k in ks]:
            if lo <= X <= hi:
                best = max(best, float(y(X)) - (A[1] + (X - x - A[0]) / ex * ey))
    return best


def test_one_and_a_half_periods_bounces_and_pitches_like_the_closed_form_and_is_flagged():
    """Two squares on one shaft, 1.5 track periods apart: the rear wheel rolls ideally (height
    0), the front one keeps its assembly angle relative to it, so it is turned
    d = [theta(x_r) - theta(x_r0)] - [theta(x_f) - theta(x_f0)] past its ideal angle
    (theta(x) = k pi/2 + atan(sinh((x - kP)/a)) on the arch about kP: Hall & Wagon 1992) and
    rests at the exact height above; a rigid beam on two axles passes through both, so the
    pitch is atan(h_f / wheelbase)."""
    a = 0.3
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=a))
    P = 2 * a * math.asinh(1.0)
    wb = 1.5 * P
    res = cart_phasing(pair, VehicleSpec(axles=2, wheelbase_m=wb, coupled=True))

    def theta(x):
        k = np.round(x / P)
        return k * math.pi / 2 + np.arctan(np.sinh((x - k * P) / a))

    xr, xf = res.x_m - wb / 2, res.x_m + wb / 2
    d = theta(xr) - theta(xr[0]) - (theta(xf) - theta(xf[0]))
    h = np.array([square_rest_height(float(x), a, float(dd)) for x, dd in zip(xf, d, strict=True)])
    np.testing.assert_allclose(res.axle_height_m[0], 0.0, atol=1e-12)
    np.testing.assert_allclose(res.axle_height_m[1], h, atol=1e-12)
    np.testing.assert_allclose(res.pitch_rad, np.arctan(h / wb), atol=1e-12)
    assert res.bounce_m == pytest.approx(np.ptp(h), abs=1e-12)
    assert res.pitch_range_rad == pytest.approx(np.ptp(np.arctan(h / wb)), abs=1e-12)
    assert res.bounce_m > 0.03  # a real bounce: 40 mm on a 0.3 m square
    assert res.out_of_phase and res.whole_periods in (1, 2)
    (finding,) = [f for f in res.findings if f.code == "wheelbase_out_of_phase"]
    assert finding.blocks and finding.data["bounce_m"] == res.bounce_m
    assert f"bounces {1000 * res.bounce_m:.2f} mm" in describe(finding)
    # A wheelbase off by the tolerance costs far less.
    assert res.tolerance_cost["bounce_m"] < 0.02 * res.bounce_m


def test_skid_is_the_integral_of_the_rate_mismatch():
    """One shaft turning at the rear wheel's rate 1/r_0 drives the front rim at r_1/r_0 of the
    ground speed: it slides int_0^L |r_1/r_0 - 1| dx a wheel turn (first order), with
    r = a cosh((x - kP)/a) on the square's arches (Hall & Wagon 1992); by scipy's quad."""
    from scipy.integrate import quad

    a = 0.3
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=a))
    P = 2 * a * math.asinh(1.0)
    wb = 1.5 * P

    def r(x):
        return a * math.cosh((x - round(x / P) * P) / a)

    kinks = sorted({(k + 0.5) * P + s for k in range(-2, 6) for s in (-wb / 2, wb / 2)})
    exact, _ = quad(lambda x: abs(r(x + wb / 2) / r(x - wb / 2) - 1), 0.0, 4 * P,
                    points=[k for k in kinks if 0 < k < 4 * P], limit=200)
    res = cart_phasing(pair, VehicleSpec(axles=2, wheelbase_m=wb, coupled=True), samples=2880)
    # The samples' mean is the midpoint rule on a periodic integrand with kinks: O(dx^2).
    assert res.skid_m == pytest.approx(exact, rel=1e-4)


def test_wheelbase_within_the_build_tolerance_is_in_phase():
    """A square's track period is 2 a asinh(1) (Hall & Wagon 1992). A wheelbase a micrometre off
    two periods is in phase; 0.6 mm off is beyond the default 0.5 mm tolerance (common
    practice) and costs more than the tolerance does, but is in phase for a 1 mm tolerance."""
    a = 0.3
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=a))
    P = 2 * a * math.asinh(1.0)
    near = cart_phasing(pair, VehicleSpec(axles=2, wheelbase_m=2 * P + 1e-6, coupled=True))
    assert not near.out_of_phase and near.tolerance_cost is None and not near.findings
    assert near.whole_periods == 2 and near.wheelbase_error_m == pytest.approx(1e-6, abs=1e-12)
    assert near.wheelbase_tolerance_m == 5e-4
    off = VehicleSpec(axles=2, wheelbase_m=2 * P + 6e-4, coupled=True)
    far = cart_phasing(pair, off)
    assert far.out_of_phase
    assert far.bounce_m > far.tolerance_cost["bounce_m"] > 0
    (finding,) = far.findings
    assert finding.data["fix_periods"] == 2 and finding.data["fix_m"] == pytest.approx(2 * P)
    assert "vehicle.wheelbase_periods = 2" in describe(finding)
    assert f"{2 * P:.4f} m" in describe(finding)
    assert not cart_phasing(pair, off, wheelbase_tolerance_m=1e-3).out_of_phase


def test_round_wheels_are_in_phase_at_any_wheelbase():
    """A circle about its centre rolls on a flat track: coupled or not, any wheelbase rides
    level and turns both wheels alike (nothing to bounce, pitch or skid)."""
    pair = rs.track_for(rs.Wheel.circle(0.1))
    wb = 0.37 * pair.track.period + 0.3
    res = cart_phasing(pair, VehicleSpec(axles=2, wheelbase_m=wb, coupled=True))
    assert abs(res.wheelbase_error_m) > 1e-2
    assert not res.out_of_phase and not res.findings
    assert res.bounce_m <= 1e-12 and res.skid_m <= 1e-12


@pytest.mark.parametrize("wheel", [
    "outline",
    rs.Wheel.polygon(sides=5, apothem=0.2, axle=(0.02, 0.01)),
    rs.Wheel.ellipse(semi_axes=(0.3, 0.2), axle=(0.05, 0.03)),
], ids=["300-vertex outline", "off-centre pentagon", "ellipse"])
def test_resting_height_agrees_with_brute_force_over_the_whole_rim(wheel):
    """Resting height (max over the rim of y_track(x + p_x) - p_y, the definition) against a
    slow reference that evaluates that maximum over densely sampled rim points at every
    pose: the pruned search with its golden-section refinement must reach the dense maximum
    and never exceed the true one (dense samples are true rim points)."""
    if wheel == "outline":
        t = np.linspace(0.0, 2.0 * math.pi, 300, endpoint=False)
        pts = np.column_stack([0.3 * np.cos(t), 0.2 * np.sin(t) * (1.0 + 0.1 * np.cos(3.0 * t))])
        wheel = rs.Wheel.outline(pts, axle=(0.05, 0.03), corners="all")  # a 300-vertex polygon
    pair = rs.track_for(wheel)
    rng = np.random.default_rng(7)
    x = rng.uniform(0.0, pair.revolution_length, 16)
    th = pair.wheel_angle(x) + rng.uniform(-0.15, 0.15, x.size)  # turned off the ideal
    h = resting_height(pair, x, th)
    if wheel.is_polygon:
        V = np.asarray(wheel.vertices)
        W = np.roll(V, -1, axis=0)
        m = 200_000 // len(V)  # dense samples per edge
        u = np.arange(m) / m
        P = (V[:, None, :] + u[None, :, None] * (W - V)[:, None, :]).reshape(-1, 2)
    else:
        phi = np.linspace(0.0, 2.0 * math.pi, 200_000, endpoint=False)
        r = wheel.radius(phi)
        P = np.column_stack([r * np.cos(phi), r * np.sin(phi)])
    ref = np.empty(x.size)
    for i, (xi, ti) in enumerate(zip(x, th, strict=True)):
        c, s = math.cos(ti), math.sin(ti)
        ref[i] = np.max(pair.track.y(xi + c * P[:, 0] + s * P[:, 1]) - (-s * P[:, 0] + c * P[:, 1]))
    # Dense sampling misses the touching point by at most ~1e-9 m here; the refinement is
    # good to ~1e-12 m.
    assert np.all(h >= ref - 1e-12)
    assert np.all(h - ref <= 2e-9)
