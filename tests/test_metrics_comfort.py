"""Checks of the ISO 2631-1 comfort weighting against the standard's table and closed forms.

Sources
-------
* ISO 2631-1:1997, "Mechanical vibration and shock - Evaluation of human exposure to
  whole-body vibration - Part 1: General requirements": Table 3 (weighting factors
  x 1000 at the one-third-octave centres), Annex A (the filter formulas), Annex C
  (comfort reactions). The standard itself was not read here: the table values are
  [memory], and agree digit for digit with the table as reproduced in several
  independent open listings; the filter parameters are as recorded in
  REFERENCES.md (seen in several independent open implementations).
* Integrals of sin^2 and sin^4 over whole periods (any table of integrals, e.g.
  Gradshteyn & Ryzhik, Table of Integrals, Series, and Products, 2.513):
  mean(sin^2) = 1/2, mean(sin^4) = 3/8.
* scipy.signal.freqs (reference library) for an independent evaluation of the
  analogue transfer functions from their polynomial coefficients.
"""

import dataclasses
import math

import numpy as np
import pytest
import scipy.signal

import ridesim as rs
import ridesim.metrics.comfort as rc
from ridesim.metrics import comfort as mc

FS = 1000.0  # the simulator's sample rate [Hz]
TWO_PI = 2.0 * math.pi

# ISO 2631-1:1997 Table 3, weighting factors x 1000 at the nominal one-third-octave
# centre frequencies [memory; agrees with the reproductions noted above]. Kept as
# strings so that each value's tolerance follows from its last printed digit.
TABLE3 = [
    # f_Hz,   Wk,     Wd
    (0.1, "31.2", "62.4"),
    (0.125, "48.6", "97.3"),
    (0.16, "79.0", "158"),
    (0.2, "121", "243"),
    (0.25, "182", "365"),
    (0.315, "263", "530"),
    (0.4, "352", "713"),
    (0.5, "418", "853"),
    (0.63, "459", "944"),
    (0.8, "477", "992"),
    (1.0, "482", "1011"),
    (1.25, "484", "1008"),
    (1.6, "494", "968"),
    (2.0, "531", "890"),
    (2.5, "631", "776"),
    (3.15, "804", "642"),
    (4.0, "967", "512"),
    (5.0, "1039", "409"),
    (6.3, "1054", "323"),
    (8.0, "1036", "253"),
    (10.0, "988", "212"),
    (12.5, "902", "161"),
    (16.0, "768", "125"),
    (20.0, "636", "100"),
    (25.0, "513", "80.0"),
    (31.5, "405", "63.2"),
    (40.0, "314", "49.4"),
    (50.0, "246", "38.8"),
    (63.0, "186", "29.5"),
    (80.0, "132", "21.1"),
    (100.0, "88.7", "14.1"),
    (125.0, "54.0", "8.63"),
    (160.0, "28.5", "4.55"),
    (200.0, "15.2", "2.43"),
    (250.0, "7.90", "1.26"),
    (315.0, "3.98", "0.64"),
    (400.0, "1.95", "0.31"),
]

# The one table entry the filter formula does not reproduce to its printed digits:
# Wd at 10 Hz is printed 212 while the formula gives 201.7 (5 % or 0.43 dB apart).
# We follow the formula (the table's other 73 entries match it to rounding).
FORMULA_DEPARTS = {(10.0, "d")}


def last_unit(text):
    """One unit in the last printed digit of a decimal string."""
    decimals = len(text.split(".")[1]) if "." in text else 0
    return 10.0**-decimals


def table_cases():
    for f, wk, wd in TABLE3:
        yield f, "k", wk
        yield f, "d", wd


# ----------------------------------------------------------------------------- weightings


@pytest.mark.parametrize("f_hz,weighting,printed", list(table_cases()))
def test_gain_matches_table3(f_hz, weighting, printed):
    """ISO 2631-1:1997 Table 3 [memory]: the filter gain at the nominal centre frequency."""
    gain_x1000 = 1000.0 * float(mc.weighting_gain(f_hz, weighting))
    table = float(printed)
    # Every entry within +-1 dB (+12.2 %/-10.9 %), tighter than the +26 %/-21 % (+-2 dB)
    # sometimes quoted as the weighting tolerance [memory].
    assert 10 ** (-1 / 20) <= gain_x1000 / table <= 10 ** (1 / 20)
    if (f_hz, weighting) in FORMULA_DEPARTS:
        assert abs(gain_x1000 - table) > 5 * last_unit(printed)  # formula, not the printed 212
    else:
        # The table is the formula to 3 significant figures (2 at the smallest Wd values). Two
        # entries sit just beyond plain rounding of the formula at the nominal frequency (Wk 1.25 Hz
        # 484 vs 484.5, Wk 16 Hz 768 vs 768.7), so the check allows one unit of the last digit
        # (at most 0.2 % for the 3-figure entries from 500 up, 1 % from 100 up).
        np.testing.assert_allclose(gain_x1000, table, rtol=0, atol=last_unit(printed) * (1 + 1e-9))


def test_brief_recollections_of_wk_and_wd():
    """Values recalled in the task brief [memory], read against Table 3 above.

    Recalled and confirmed: Wk 1 Hz 0.482, 16 Hz 0.768, 31.5 Hz 0.405, 4-8 Hz near 1.0-1.05;
    Wd 1 Hz 1.011, 2 Hz 0.890, 4 Hz 0.512. Recalled wrongly: "Wk 4 Hz 1.036" is the 8 Hz
    entry (4 Hz is 0.967) and "Wd 8 Hz 0.263" is 0.253 in the table.
    """
    # atol 1e-3: one unit of the table's last digit (see test_gain_matches_table3).
    np.testing.assert_allclose(mc.weighting_gain([1.0, 16.0, 31.5], "k"), [0.482, 0.768, 0.405], atol=1e-3)
    np.testing.assert_allclose(mc.weighting_gain([1.0, 2.0, 4.0], "d"), [1.011, 0.890, 0.512], atol=1e-3)
    np.testing.assert_allclose(mc.weighting_gain([4.0, 8.0], "k"), [0.967, 1.036], atol=1e-3)
    np.testing.assert_allclose(mc.weighting_gain(8.0, "d"), 0.253, atol=1e-3)
    assert abs(float(mc.weighting_gain(4.0, "k")) - 1.036) > 0.05  # the recalled 4 Hz figure is not it
    assert abs(float(mc.weighting_gain(8.0, "d")) - 0.263) > 0.005
    # Table 3 runs 0.967-1.054 over 4-8 Hz; between the centres the gain stays within 1 %.
    peak = mc.weighting_gain(np.linspace(4.0, 8.0, 401), "k")
    assert 0.967 * 0.99 < peak.min() and peak.max() < 1.054 * 1.01


def _polynomials(w):
    """The ISO 2631-1 weighting as numerator/denominator polynomials in s (highest power first).

    Multiplying each stage of Annex A out by hand, with w = 2 pi f:
    high-pass s^2 / (s^2 + s w1/Q + w1^2); low-pass w2^2 / (s^2 + s w2/Q + w2^2);
    transition (w4^2/w3)(s + w3) / (s^2 + s w4/Q4 + w4^2);
    upward step (s^2 + s w5/Q5 + w5^2) / (s^2 + s w6/Q6 + w6^2) (the factor (w5/w6)^2
    cancels the 1/w5^2 and 1/w6^2 of the standard's normalised form).
    """
    q = 1 / math.sqrt(2)
    p = {
        "k": dict(f3=12.5, f4=12.5, q4=0.63, f5=2.37, q5=0.91, f6=3.35, q6=0.91),
        "d": dict(f3=2.0, f4=2.0, q4=0.63),
    }[w]
    w1, w2, w3, w4 = (TWO_PI * f for f in (0.4, 100.0, p["f3"], p["f4"]))
    b = np.polymul([1.0, 0.0, 0.0], [w2**2])
    a = np.polymul([1.0, w1 / q, w1**2], [1.0, w2 / q, w2**2])
    b = np.polymul(b, [w4**2 / w3, w4**2])
    a = np.polymul(a, [1.0, w4 / p["q4"], w4**2])
    if "f5" in p:
        w5, w6 = TWO_PI * p["f5"], TWO_PI * p["f6"]
        b = np.polymul(b, [1.0, w5 / p["q5"], w5**2])
        a = np.polymul(a, [1.0, w6 / p["q6"], w6**2])
    return b, a


@pytest.mark.parametrize("weighting", ["k", "d"])
def test_response_matches_scipy_freqs(weighting):
    """Independent path: scipy.signal.freqs on the multiplied-out polynomials, to 1e-10."""
    f = np.logspace(-2, 3, 301)
    b, a = _polynomials(weighting)
    _, h_ref = scipy.signal.freqs(b, a, worN=TWO_PI * f)
    np.testing.assert_allclose(mc.weighting_response(f, weighting), h_ref, rtol=1e-10, atol=0)
    np.testing.assert_allclose(mc.weighting_gain(f, weighting), np.abs(h_ref), rtol=1e-10, atol=0)


def test_upward_step_gain_convention():
    """The step stage tends to (f5/f6)^2 at low frequency, not 1 (REFERENCES.md warning).

    Far below 2.37 Hz and above 0.4 Hz, Wk / Wd -> (2.37/3.35)^2 * (transition ratio); at
    1 Hz Table 3 gives 482/1011 = 0.477, half of what a unit-gain step would give.
    """
    ratio = mc.weighting_gain(1.0, "k") / mc.weighting_gain(1.0, "d")
    np.testing.assert_allclose(ratio, 482 / 1011, rtol=2e-3)  # Table 3 [memory], 3-figure rounding
    assert float(mc.weighting_gain(0.0, "k")) == 0.0  # the high-pass blocks a constant


# ----------------------------------------------------------------------------- sines

DURATION_S = 18.0
SETTLE_S = 8.0  # slowest pole (0.4 Hz, Q = 1/sqrt 2) decays as exp(-1.78 t): 7e-7 after 8 s
T = np.arange(int(DURATION_S * FS)) / FS
WINDOW_S = DURATION_S - SETTLE_S  # 10 s: a whole number of periods for every frequency below
SINE_HZ = [0.5, 1.0, 2.5, 4.0, 6.3, 8.0, 16.0, 31.5, 40.0]


@pytest.mark.parametrize("weighting", ["k", "d"])
@pytest.mark.parametrize("f_hz", SINE_HZ)
def test_sine_weighted_rms_vdv_and_waveform(f_hz, weighting):
    """a_w = A |W| / sqrt(2); VDV = (3T/8)^(1/4) A |W|; steady state A |W| sin(wt + arg W)."""
    amp = 0.7
    x = amp * np.sin(TWO_PI * f_hz * T) + 9.81  # gravity included: W(0) = 0 removes it
    h = complex(mc.weighting_response(f_hz, weighting))
    # Tolerance 1e-6: the start-up transient left after SETTLE_S is < 1e-6 of A, and the band
    # limit at fs/2 (|W| <= 1e-3 there) changes an r.m.s. by ~|W(fs/2)|^2.
    np.testing.assert_allclose(
        mc.weighted_rms(x, FS, weighting, settle_s=SETTLE_S), amp * abs(h) / math.sqrt(2), rtol=1e-6
    )
    np.testing.assert_allclose(
        mc.vdv(x, FS, weighting, settle_s=SETTLE_S), (3 * WINDOW_S / 8) ** 0.25 * amp * abs(h), rtol=1e-6
    )
    y = mc.weight(x, FS, weighting)
    ref = amp * abs(h) * np.sin(TWO_PI * f_hz * T + np.angle(h))
    inner = (T >= SETTLE_S) & (T < DURATION_S - 2.0)  # the last 2 s carry the band-limit edge effect
    np.testing.assert_allclose(y[inner], ref[inner], rtol=0, atol=2e-6 * amp)


@pytest.mark.parametrize("f_hz", [1.0, 4.0, 8.0])
def test_sine_crest_factor(f_hz):
    """Crest factor of a sine is sqrt(2); sampling can miss the peak by a factor cos(pi f/fs)."""
    x = np.sin(TWO_PI * f_hz * T)
    cf = mc.crest_factor(x, FS, "k", settle_s=SETTLE_S)
    assert math.sqrt(2) * math.cos(math.pi * f_hz / FS) * (1 - 1e-6) <= cf <= math.sqrt(2) * (1 + 1e-6)


def test_two_sines_add_in_power():
    """Sines of different frequencies over whole periods are orthogonal: a_w^2 = sum (A_i |W_i|)^2 / 2."""
    parts = [(0.4, 2.0), (0.3, 12.5)]
    x = sum(a * np.sin(TWO_PI * f * T + 0.3) for a, f in parts)
    expect = math.sqrt(sum((a * float(mc.weighting_gain(f, "k"))) ** 2 / 2 for a, f in parts))
    np.testing.assert_allclose(mc.weighted_rms(x, FS, "k", settle_s=SETTLE_S), expect, rtol=1e-6)


def test_constant_has_no_weighted_rms():
    """W(0) = 0: a constant acceleration (gravity) weighs nothing."""
    assert mc.weighted_rms(np.full(5000, 9.81), FS) < 1e-12


# ----------------------------------------------------------------------------- comfort bands


@pytest.mark.parametrize(
    "a,text",
    [
        # ISO 2631-1:1997 Annex C comfort reactions [memory, REFERENCES.md]:
        # < 0.315 not; 0.315-0.63 a little; 0.5-1 fairly; 0.8-1.6 uncomfortable;
        # 1.25-2.5 very; > 2 extremely uncomfortable.
        (0.0, "not uncomfortable"),
        (0.3149, "not uncomfortable"),
        (0.315, "a little uncomfortable"),
        (0.4, "a little uncomfortable"),
        (0.5, "a little uncomfortable to fairly uncomfortable"),
        (0.63, "a little uncomfortable to fairly uncomfortable"),
        (0.7, "fairly uncomfortable"),
        (0.8, "fairly uncomfortable to uncomfortable"),
        (0.9, "fairly uncomfortable to uncomfortable"),
        (1.0, "fairly uncomfortable to uncomfortable"),
        (1.1, "uncomfortable"),
        (1.25, "uncomfortable to very uncomfortable"),
        (1.6, "uncomfortable to very uncomfortable"),
        (1.8, "very uncomfortable"),
        (2.0, "very uncomfortable"),
        (2.01, "very uncomfortable to extremely uncomfortable"),
        (2.5, "very uncomfortable to extremely uncomfortable"),
        (2.6, "extremely uncomfortable"),
        (30.0, "extremely uncomfortable"),
    ],
)
def test_comfort_band(a, text):
    assert rc.comfort_band(a) == text


@pytest.mark.parametrize("bad", [-0.1, math.nan, math.inf, "0.5", None, True])
def test_comfort_band_rejects(bad, raises_one_line):
    raises_one_line(rs.InputError, ["a_w_rms"], rc.comfort_band, bad)


# ----------------------------------------------------------------------------- report


def test_comfort_report_two_axes():
    """Seat sines: 0.8 m/s^2 at 5 Hz vertical, 0.4 m/s^2 at 1.6 Hz fore-aft.

    By Table 3 [memory]: a_wz = 0.8 * 1.039 / sqrt 2 = 0.588, a_wx = 0.4 * 0.968 / sqrt 2 = 0.274,
    a_v = sqrt(a_wz^2 + a_wx^2) = 0.648 (k = 1 at the seat surface for comfort [memory]):
    only "fairly uncomfortable" (0.5-1) holds above 0.63.
    """
    z = 0.8 * np.sin(TWO_PI * 5.0 * T) - 9.81
    x = 0.4 * np.sin(TWO_PI * 1.6 * T)
    r = rc.comfort_report(z, x, FS, settle_s=SETTLE_S)
    awz = 0.8 * float(mc.weighting_gain(5.0, "k")) / math.sqrt(2)
    awx = 0.4 * float(mc.weighting_gain(1.6, "d")) / math.sqrt(2)
    np.testing.assert_allclose(r.weighted_rms_m_s2, awz, rtol=1e-6)
    np.testing.assert_allclose(r.weighted_rms_m_s2, 0.8 * 1.039 / math.sqrt(2), rtol=5e-4)  # Table 3
    np.testing.assert_allclose(r.weighted_rms_horizontal_m_s2, awx, rtol=1e-6)
    np.testing.assert_allclose(r.total_value_m_s2, math.hypot(awz, awx), rtol=1e-6)
    np.testing.assert_allclose(r.vdv_m_s175, (3 * WINDOW_S / 8) ** 0.25 * awz * math.sqrt(2), rtol=1e-6)
    # VDV / (a_w T^(1/4)) of a sine = sqrt(2) (3/8)^(1/4) from the two period means.
    np.testing.assert_allclose(r.vdv_ratio, math.sqrt(2) * (3 / 8) ** 0.25, rtol=1e-6)
    assert (
        math.sqrt(2) * math.cos(math.pi * 5 / FS) * (1 - 1e-6) <= r.crest_factor <= math.sqrt(2) * (1 + 1e-6)
    )
    assert r.band == "fairly uncomfortable"
    np.testing.assert_allclose(r.duration_s, WINDOW_S, rtol=1e-12)

    d = r.to_dict()
    assert {"weighted_rms_m_s2", "vdv_m_s175", "crest_factor", "band"} <= set(d)
    assert d["weighted_rms_m_s2"] == r.weighted_rms_m_s2 and d["band"] == r.band
    for key in set(d) - {"band", "cautions", "crest_factor", "crest_factor_horizontal", "vdv_ratio"}:
        assert key.endswith(("_m_s2", "_m_s175", "_s", "_hz")), key  # the unit is in the name
    text = " ".join(d["cautions"])
    for must in ("ASTM F2291", "EN 13814", "0.5-80 Hz", "posture", "lateral"):
        assert must in text, must
    assert "start-up transient" not in text  # settle_s = 8 s covers it
    with pytest.raises(dataclasses.FrozenInstanceError):
        r.band = "fine"  # type: ignore[misc]


def test_comfort_report_vertical_only_and_cautions():
    z = 0.3 * np.sin(TWO_PI * 8.0 * T[:6000])
    r = rc.comfort_report(z, None, FS)
    assert r.weighted_rms_horizontal_m_s2 is None and r.to_dict()["vdv_horizontal_m_s175"] is None
    assert r.total_value_m_s2 == r.weighted_rms_m_s2
    assert any("start-up transient" in c for c in r.cautions)  # settle_s = 0 < 2.6 s


def test_comfort_report_flags_shocks():
    """One 10 ms, 30 m/s^2 bump in 12 s of small vibration: crest factor far above 9."""
    t = T[:12000]
    z = 0.05 * np.sin(TWO_PI * 4.0 * t)
    bump = (t >= 6.0) & (t < 6.01)
    z[bump] += 30.0 * np.sin(math.pi * (t[bump] - 6.0) / 0.01)
    r = rc.comfort_report(z, None, FS, settle_s=3.0)
    assert r.crest_factor > 9
    assert any("shocks" in c for c in r.cautions)



def test_record_from_rest_is_the_filter_started_at_rest():
    """A record that starts from rest: the weighting started at rest is the true response.

    Causality of a linear time-invariant filter (Oppenheim & Schafer, "Discrete-Time Signal
    Processing", ch. 2): zeros before the record change nothing after it, so the figures of
    the record equal those of the same record preceded by 10 s of rest and cut after them,
    and no caution about a short settle_s is due.
    """
    t = T[:6000]
    z = 0.3 * np.sin(TWO_PI * 5.0 * t) * np.minimum(t / 0.5, 1.0) + 0.1  # offset kept
    x = 0.2 * np.sin(TWO_PI * 1.5 * t) * np.minimum(t / 0.5, 1.0)
    r = rc.comfort_report(z, x, FS, settle_s=1.0, from_rest=True)
    pad = np.zeros(int(10 * FS))
    zz, xx = np.concatenate([pad, z]), np.concatenate([pad, x])
    awz = rc.weight(zz, FS, "k", remove_mean=False)[pad.size + 1000:]
    awx = rc.weight(xx, FS, "d", remove_mean=False)[pad.size + 1000:]
    assert r.weighted_rms_m_s2 == pytest.approx(float(np.sqrt(np.mean(awz**2))), rel=1e-6)
    assert r.weighted_rms_horizontal_m_s2 == pytest.approx(float(np.sqrt(np.mean(awx**2))),
                                                           rel=1e-6)
    assert not any("settle_s" in c for c in r.cautions)
    cut = rc.comfort_report(z, x, FS, settle_s=1.0)  # a record cut from a longer motion
    assert any("settle_s" in c for c in cut.cautions)


# ----------------------------------------------------------------------------- spectrum


def test_spectrum_of_three_sines():
    """Sines on exact bins (whole periods, no window): each band holds A/sqrt 2, weighted A|W|/sqrt 2."""
    parts = {1.0: 0.3, 5.0: 0.5, 20.0: 0.2}
    x = sum(a * np.sin(TWO_PI * f * T) for f, a in parts.items())
    s = rc.spectrum(x, FS, "k", settle_s=SETTLE_S)
    assert s.centre_hz[0] == 0.5 and s.centre_hz[-1] == 80.0 and s.centre_hz.size == 23
    # Base-10 one-third octaves: upper/lower = 10^(1/10); nominal centres round 10^(n/10)
    # to within about 1 % (preferred numbers).
    np.testing.assert_allclose(s.upper_hz / s.lower_hz, 10**0.1, rtol=1e-12)
    np.testing.assert_allclose(np.sqrt(s.upper_hz * s.lower_hz), s.centre_hz, rtol=1.2e-2)
    np.testing.assert_allclose(s.resolution_hz, 1 / WINDOW_S, rtol=1e-12)
    for f, a in parts.items():
        j = int(np.flatnonzero((s.lower_hz <= f) & (f < s.upper_hz))[0])
        np.testing.assert_allclose(s.rms_m_s2[j], a / math.sqrt(2), rtol=1e-9)
        np.testing.assert_allclose(
            s.weighted_rms_m_s2[j], a * float(mc.weighting_gain(f, "k")) / math.sqrt(2), rtol=1e-9
        )
    others = np.array(
        [not any(lo <= f < hi for f in parts) for lo, hi in zip(s.lower_hz, s.upper_hz, strict=True)]
    )
    np.testing.assert_allclose(s.rms_m_s2[others], 0.0, atol=1e-9)
    d = s.to_dict()
    assert len(d["rms_m_s2"]) == 23 and d["weighting"] == "k"


def test_spectrum_marks_unresolved_bands():
    """A 3 s span has 1/3 Hz bins: the 0.5 Hz band (0.447-0.562 Hz) holds none."""
    s = rc.spectrum(np.sin(TWO_PI * 2.0 * T[:3000]), FS)
    assert s.bins[0] == 0 and math.isnan(s.rms_m_s2[0]) and s.to_dict()["rms_m_s2"][0] is None


# ----------------------------------------------------------------------------- errors

GOOD = np.sin(TWO_PI * 2.0 * T[:5000])


@pytest.mark.parametrize("fs", [0.0, -1000.0, math.nan, math.inf, 10.0, "1000", True, None])
def test_bad_sample_rate(fs, raises_one_line):
    raises_one_line(rs.InputError, ["sample_rate_hz"], mc.weighted_rms, GOOD, fs)


def test_input_errors(raises_one_line):
    raises_one_line(rs.InputError, ["accel_m_s2", "2 s"], mc.weight, GOOD[:1500], FS)
    raises_one_line(rs.InputError, ["settle", "2 s"], mc.vdv, GOOD, FS, settle_s=3.5)
    raises_one_line(rs.InputError, ["settle_s", ">= 0"], mc.crest_factor, GOOD, FS, settle_s=-1.0)
    bad = GOOD.copy()
    bad[7] = np.nan
    raises_one_line(rs.InputError, ["finite", "sample 7"], mc.weighted_rms, bad, FS)
    raises_one_line(rs.InputError, ["1-d"], mc.weighted_rms, GOOD.reshape(2, -1), FS)
    raises_one_line(rs.InputError, ["weighting", "'k'"], mc.weighted_rms, GOOD, FS, "z")
    raises_one_line(rs.InputError, ["freq_hz"], mc.weighting_gain, [-1.0, 2.0])
    raises_one_line(
        rs.InputError, ["seat_horizontal_m_s2", "same clock"], rc.comfort_report, GOOD, GOOD[:-1], FS
    )
    raises_one_line(rs.InputError, ["low_hz", "high_hz"], rc.spectrum, GOOD, FS, low_hz=10.0, high_hz=5.0)
    assert issubclass(rs.InputError, ValueError)
