"""Ride metrics on synthetic probe records with closed-form answers.

Each expected value is a closed form written in the test (the peak-to-peak of a
sinusoid is twice its amplitude, the RMS of a sinusoid of amplitude A is A/sqrt(2),
the mean of a sinusoid over whole periods is zero, a moving average of a constant
is the constant), so nothing here depends on running our own engine.
"""

import json
import math

import numpy as np
import pytest

from ridesim.metrics import ride
from ridesim.sim.engine import Probes


def make_probes(n=2000, dt=0.001, axles=1, shafts=1, settle=0.5, target=0.5, **over):
    t = dt * np.arange(1, n + 1)
    z = np.zeros((n, axles))
    fields = dict(
        time_s=t, axle_x_m=z.copy(), axle_y_m=z.copy(), wheel_angle_rad=z.copy(),
        wheel_rate_rad_s=z.copy(), pitch_rad=np.zeros(n), speed_m_s=np.full(n, target),
        seat_ax_m_s2=np.zeros(n), seat_ay_m_s2=np.zeros(n), slip_speed_m_s=z.copy(),
        normal_force_N=np.ones((n, axles)), contact=np.ones((n, axles), dtype=bool),
        contact_x_m=z.copy(), shaft_torque_Nm=np.zeros((n, shafts)),
        shaft_axles=tuple((i,) for i in range(shafts)), dt_s=dt, settle_s=settle,
        target_speed_m_s=target, info={},
    )
    fields.update(over)
    return Probes(**fields)


def test_moving_average_matches_convolution():
    # A trailing average equals np.convolve with a box of n ones / n once the window is full.
    rng = np.random.default_rng(1)
    x = rng.normal(size=500)
    n = 7
    got = ride.moving_average(x, n)
    ref = np.convolve(x, np.ones(n) / n, mode="valid")
    np.testing.assert_allclose(got[n - 1 :], ref, rtol=0, atol=1e-12)
    # The partial windows at the start average what is there.
    np.testing.assert_allclose(got[2], x[:3].mean(), rtol=0, atol=1e-15)


def test_moving_average_skips_nan():
    x = np.array([1.0, np.nan, 3.0, np.nan, np.nan, np.nan])
    got = ride.moving_average(x, 3)
    np.testing.assert_allclose(got[:3], [1.0, 1.0, 2.0])
    assert math.isnan(got[5])


def test_bounce_is_twice_the_amplitude():
    # Peak-to-peak of A sin(2 pi f t) over whole periods is 2A; settle time excluded.
    p = make_probes(axles=2)
    A = np.array([1e-3, 2e-4])
    y = A[None, :] * np.sin(2 * np.pi * 5.0 * p.time_s)[:, None]
    y[: 100] = 0.05  # a start-up transient inside the settle time must not count
    p.axle_y_m[:] = y
    np.testing.assert_allclose(ride.axle_bounce_m(p), 2 * A, rtol=1e-4)


def test_torque_rms_peak_mean_of_a_sinusoid():
    # T = T0 + A sin(w t): RMS = sqrt(T0^2 + A^2 / 2), peak |T| = T0 + A, mean T0 over whole
    # periods. A 10 ms average of a 2 Hz sine keeps its amplitude to sinc(0.02) = 0.99934.
    p = make_probes(n=2500)
    T0, A, f = 0.5, 2.0, 2.0
    p.shaft_torque_Nm[:, 0] = T0 + A * np.sin(2 * np.pi * f * p.time_s)
    st = ride.torque_stats(p)[0]
    box = math.sin(math.pi * f * ride.TORQUE_FILTER_S) / (math.pi * f * ride.TORQUE_FILTER_S)
    np.testing.assert_allclose(st["mean_Nm"], T0, atol=1e-3)
    np.testing.assert_allclose(st["peak_raw_Nm"], T0 + A, rtol=1e-5)
    np.testing.assert_allclose(st["peak_Nm"], T0 + A * box, rtol=1e-4)
    np.testing.assert_allclose(st["rms_Nm"], math.sqrt(T0**2 + (A * box) ** 2 / 2), rtol=1e-3)


def test_single_step_spikes_are_filtered_but_reported_raw():
    p = make_probes()
    p.shaft_torque_Nm[1000, 0] = 10.0  # one-step impulse
    st = ride.torque_stats(p)[0]
    assert st["peak_raw_Nm"] == 10.0
    # A box average over n samples spreads it to 10 / n.
    n = int(round(ride.TORQUE_FILTER_S / p.dt_s))
    np.testing.assert_allclose(st["peak_Nm"], 10.0 / n, rtol=1e-12)


def test_speed_ripple_of_a_sinusoid():
    # v = v0 (1 + e sin): peak-to-peak 2 e v0, ripple 200 e percent (less the 10 ms average's
    # attenuation at 1 Hz, sinc(0.01) = 0.99984); three whole periods after settling.
    p = make_probes(n=3500)
    v0, e = 0.4, 0.05
    p.speed_m_s[:] = v0 * (1 + e * np.sin(2 * np.pi * 1.0 * p.time_s))
    sp = ride.speed_stats(p)
    np.testing.assert_allclose(sp["ripple_pct"], 200 * e * 0.99984, rtol=2e-3)
    np.testing.assert_allclose(sp["mean_m_s"], v0, rtol=1e-3)


def test_speed_ripple_ignores_the_ramp():
    p = make_probes(n=3000, info={"ramp_end_s": 2.0})
    p.speed_m_s[:] = np.minimum(0.2 * p.time_s, 0.4)
    assert ride.speed_stats(p)["ripple_pct"] < 1e-9


def test_slip_threshold_floor_and_fraction():
    assert ride.slip_threshold_m_s(make_probes(target=0.2)) == ride.SLIP_FLOOR_M_S
    np.testing.assert_allclose(ride.slip_threshold_m_s(make_probes(target=3.0)),
                               ride.SLIP_SPEED_FRACTION * 3.0)


def test_slip_onset_needs_a_lasting_stretch():
    p = make_probes(axles=2)
    thr = ride.slip_threshold_m_s(p)
    sl = p.slip_speed_m_s
    sl[700:705, 0] = 10 * thr  # a 5 ms scrub: not slip
    sl[1200:1300, 1] = -3 * thr  # 100 ms of backward spin on axle 1: slip
    t, axle, peak = ride.slip_onset(p)
    assert axle == 1
    # The filtered signal crosses the threshold once a third of the 5 ms window is over it.
    np.testing.assert_allclose(t, p.time_s[1200 + 1], atol=2 * p.dt_s)
    assert peak >= 3 * thr * 0.999


def test_no_slip_gives_none():
    p = make_probes()
    p.slip_speed_m_s[:, 0] = 0.2 * ride.SLIP_FLOOR_M_S
    t, axle, peak = ride.slip_onset(p)
    assert t is None and axle is None
    np.testing.assert_allclose(peak, 0.2 * ride.SLIP_FLOOR_M_S)


def test_contact_loss_needs_a_gap_of_minimum_length():
    p = make_probes()
    p.contact[800, 0] = False  # single steps off: the solver's hand-over, not a hop
    p.contact[900, 0] = False
    assert not ride.contact_lost(p)
    n = int(round(ride.CONTACT_LOSS_MIN_S / p.dt_s))
    p.contact[1500 : 1500 + n, 0] = False
    assert ride.contact_lost(p)


def test_result_dict_contract_and_csv(tmp_path):
    p = make_probes(shafts=2, axles=2)
    p.shaft_torque_Nm[:, 0] = 1.0
    p.shaft_torque_Nm[:, 1] = -2.0
    r = ride.SimResult.from_probes(p, name="demo")
    d = r.to_dict()
    json.dumps(d)  # plain types only
    for key in ("axle_bounce_m", "slip", "torque", "speed", "contact_lost", "steps", "sim_time_s",
                "cautions"):
        assert key in d
    assert set(d["slip"]) >= {"onset_time_s", "max_slip_speed_m_s"}
    assert set(d["speed"]) == {"mean_m_s", "final_m_s", "ripple_pct"}
    assert d["torque"]["peak_Nm"] == pytest.approx(2.0)  # the larger of the two shafts
    assert [w["peak_Nm"] for w in d["torque"]["motors"]] == pytest.approx([1.0, 2.0])
    assert [w["name"] for w in d["torque"]["motors"]] == ["axle 0 shaft", "axle 1 shaft"]
    assert any("ASTM F2291" in c for c in d["cautions"])
    assert d["steps"] == p.steps and d["sim_time_s"] == pytest.approx(p.steps * p.dt_s)
    from ridesim.jobs.simulate import write_probes

    out = write_probes(r, tmp_path / "probes.csv")
    rows = out.read_text().splitlines()
    assert len(rows) == p.steps + 1
    assert rows[0].split(",")[0] == "time_s"
    assert not [f for f in tmp_path.iterdir() if f.name.endswith(".tmp")]


def test_result_dict_has_no_nan_for_strict_json():
    p = make_probes(target=None)
    p.speed_m_s[:] = 0.0  # ripple at zero mean speed is undefined
    d = ride.SimResult.from_probes(p).to_dict()
    assert d["speed"]["ripple_pct"] is None
    json.dumps(d, allow_nan=False)
