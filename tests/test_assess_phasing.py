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
