"""Cart phasing: resting axle height of a turned wheel, and coupled wheelbases."""

import math

import numpy as np
import pytest

import ridesim as rs
from ridesim.assess.phasing import cart_phasing, resting_height
from ridesim.io.scenario import VehicleSpec


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
    assert not res.notes


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
    assert any("not a whole number" in s for s in coupled.notes)
    free = cart_phasing(pair, VehicleSpec(axles=2, wheelbase_m=2.5 * P, coupled=False))
    assert free.bounce_m <= 1e-9 and free.phase_error_rad.max() == 0.0
    assert any("own motor" in s for s in free.notes)


def test_mounting_error_costs_bounce_like_the_closed_form():
    # One axle, a square, mounted delta off: at the arch top the axle sits at
    # a tan(d) asinh(tan(d)) (derived above), and the ride's bounce is at least that.
    a, d = 0.3, 0.05
    pair = rs.track_for(rs.Wheel.polygon(sides=4, apothem=a))
    res = cart_phasing(pair, VehicleSpec(axles=1, coupled=True), phase_offsets_rad=[d])
    assert res.bounce_m >= a * math.tan(d) * math.asinh(math.tan(d)) * 0.99


def test_scenario_mounting_error_reaches_the_verdict():
    from ridesim.assess.verdict import check_scenario
    from ridesim.io.scenario import load_scenario

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
        wheel = rs.Wheel.outline(pts, axle=(0.05, 0.03))
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
