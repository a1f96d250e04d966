"""Tests of the analytic loads, torque and power along a revolution (ridesim.assess.analytic).

Sources: L. Hall & S. Wagon, "Roads and Wheels", Mathematics Magazine 65(5), 1992 (a regular
n-gon of apothem a rolls on arches r = a cosh(x/a), |x| <= a asinh(tan(pi/n))); rigid-body
mechanics in the plane (Newton-Euler, König's theorem and the parallel-axis theorem, e.g.
Meriam & Kraige, "Engineering Mechanics: Dynamics" [memory]); rolling resistance
F = C_rr N at the wheel radius (Gillespie, "Fundamentals of Vehicle Dynamics", SAE, 1992
[memory]).
"""

import math

import numpy as np
import pytest
from scipy.integrate import quad

import ridesim as rs
from ridesim.assess.analytic import analyze_cycle
from ridesim.model.wheel import MassProperties
from ridesim.scenario.load import SurfaceSpec, VehicleSpec

G = 9.80665
SMOOTH = SurfaceSpec(friction=1.0, rolling_resistance=0.0)


def one_axle(body=2.0):
    return VehicleSpec(body_mass_kg=body, axles=1)


def polygon_case(n, a=0.3):
    w = rs.Wheel.polygon(sides=n, apothem=a)
    return rs.track_for(w), w.mass_properties(0.02, 700.0)


@pytest.mark.parametrize("n", [3, 4, 5, 6, 7, 8])
def test_regular_polygon_peak_and_rms_torque(n):
    """Steady speed v, one driven wheel: the shaft torque is T = I alpha (nothing else acts).

    On an arch r = a cosh(u), u = x/a, the shaft speed is omega = v/r and
    alpha = d omega/dt = -(v/r^2)(dr/dx) v = -(v^2/a^2) f(u) with f(u) = sinh u / cosh^2 u.
    f' = (cosh^2 u - 2 sinh^2 u)/cosh^3 u vanishes at sinh u = 1, where f = 1/2. The arch
    ends at u_c = asinh(tan(pi/n)), where sinh u_c = tan(pi/n), cosh u_c = sec(pi/n) and
    f(u_c) = sin(pi/n) cos(pi/n) = sin(2 pi/n)/2. For n >= 4, u_c <= asinh(1) and |alpha|
    peaks at the cusp; for n = 3 the interior maximum u = asinh(1) lies on the arch. So

        peak |T| = I v^2/(2 a^2)            for n = 3 and n = 4,
        peak |T| = I v^2 sin(2 pi/n)/(2 a^2) for n >= 5.

    The stated square-wheel figure I v^2/(2 a^2) is right: for n = 4 the interior maximum of
    f falls exactly on the cusp. RMS over time (dt = dx/v, uniform at steady speed):
    int f^2 du = int tanh^2 u sech^2 u du = tanh^3 u / 3 and tanh u_c = sin(pi/n), so
    mean f^2 = sin^3(pi/n) / (3 u_c).
    """
    a, v = 0.3, 0.8
    pair, mp = polygon_case(n, a)
    res = analyze_cycle(pair, vehicle=one_axle(), surface=SMOOTH, wheel_mass=mp, speed_m_s=v)
    scale = mp.inertia_kg_m2 * v * v / (a * a)
    peak = 0.5 if n <= 4 else 0.5 * math.sin(2 * math.pi / n)
    # n >= 4: the peak sits on the one-sided cusp node (1e-10 L inside): 1e-8 relative.
    # n = 3: interior maximum sampled by Gauss nodes ~L/2048 apart: f is flat there to
    # second order, error ~ (h/a)^2 ~ 2e-5.
    np.testing.assert_allclose(res.torque_peak_Nm, peak * scale, rtol=1e-4 if n == 3 else 1e-8)
    uc = math.asinh(math.tan(math.pi / n))
    rms = math.sqrt(math.sin(math.pi / n) ** 3 / (3 * uc)) * scale
    # Composite Gauss between cusps integrates the smooth pieces to near round-off.
    np.testing.assert_allclose(res.torque_rms_Nm, rms, rtol=1e-10)
    np.testing.assert_allclose(res.torque_mean_Nm, 0.0, atol=1e-10 * scale)
    np.testing.assert_allclose(res.power_mean_W, 0.0, atol=1e-10 * scale * v / a)


@pytest.mark.parametrize("n", [3, 4, 6])
def test_shaft_speeds_and_constant_shaft_speed_ripple(n):
    """omega = v / r: from v/a (face down) to v cos(pi/n)/a (vertex down).

    A constant shaft speed omega_0 gives v = r omega_0: it surges by r_max/r_min = sec(pi/n)
    and ripples by (r_max - r_min)/r_mean with r_mean = L/(2 pi), L = 2 n a asinh(tan(pi/n))
    (Hall & Wagon 1992).
    """
    a, v = 0.25, 0.5
    pair, mp = polygon_case(n, a)
    res = analyze_cycle(pair, vehicle=one_axle(), surface=SMOOTH, wheel_mass=mp, speed_m_s=v)
    np.testing.assert_allclose(res.shaft_speed_max_rad_s, v / a, rtol=1e-12)
    np.testing.assert_allclose(res.shaft_speed_min_rad_s, v * math.cos(math.pi / n) / a, rtol=1e-12)
    np.testing.assert_allclose(res.shaft_speed_drive_surge, 1 / math.cos(math.pi / n), rtol=1e-12)
    L = 2 * n * a * math.asinh(math.tan(math.pi / n))
    np.testing.assert_allclose(res.shaft_speed_drive_ripple,
                               (a / math.cos(math.pi / n) - a) / (L / (2 * math.pi)), rtol=1e-12)


def test_circle_with_rolling_resistance():
    """A round wheel on a flat road at steady speed: T = R C_rr N, P = C_rr N v (Gillespie)."""
    R, v, crr, body = 0.15, 1.2, 0.012, 20.0
    w = rs.Wheel.circle(R)
    pair, mp = rs.track_for(w), w.mass_properties(0.02, 700.0)
    surf = SurfaceSpec(friction=0.8, rolling_resistance=crr)
    res = analyze_cycle(pair, vehicle=one_axle(body), surface=surf, wheel_mass=mp, speed_m_s=v)
    N = (body + mp.mass_kg) * G
    # Solved flat track: slope noise < 1e-10, radius error < 1e-13 relative.
    np.testing.assert_allclose(res.torque_peak_Nm, R * crr * N, rtol=1e-8)
    np.testing.assert_allclose(res.torque_rms_Nm, R * crr * N, rtol=1e-8)
    np.testing.assert_allclose(res.power_mean_W, crr * N * v, rtol=1e-8)
    np.testing.assert_allclose(res.constant_torque_Nm, R * crr * N, rtol=1e-8)
    assert res.constant_torque_ripple is not None and res.constant_torque_ripple < 1e-8
    assert res.lift_off_speed_m_s is None


def test_accelerating_circle():
    """Newton-Euler on a flat road: T = R (M + m) a + I a / R for one driven wheel."""
    R, v, ax, body = 0.1, 0.5, 0.8, 12.0
    w = rs.Wheel.circle(R)
    pair, mp = rs.track_for(w), w.mass_properties(0.02, 700.0)
    res = analyze_cycle(pair, vehicle=one_axle(body), surface=SMOOTH, wheel_mass=mp,
                        speed_m_s=v, accel_m_s2=ax)
    expected = R * (body + mp.mass_kg) * ax + mp.inertia_kg_m2 * ax / R
    np.testing.assert_allclose(res.torque_peak_Nm, expected, rtol=1e-9)


def test_one_driven_axle_spins_up_both_wheels():
    """Two wheels in phase, only the front driven: the front shaft supplies both spin-ups.

    Energy: T omega = d/dt (2 * I omega^2 / 2) = 2 I omega alpha, so T = 2 I alpha, twice the
    single-wheel torque (the rear wheel's spin-up is pushed through the chassis).
    """
    a, v, n = 0.12, 0.4, 6
    pair, mp = polygon_case(n, a)
    wb = 3 * pair.track.period  # whole periods: both wheels meet the arches in phase
    both = VehicleSpec(body_mass_kg=8.0, axles=2, wheelbase_m=wb)
    front = VehicleSpec(body_mass_kg=8.0, axles=2, wheelbase_m=wb, driven_axles=(1,))
    chain = VehicleSpec(body_mass_kg=8.0, axles=2, wheelbase_m=wb, coupled=True)
    r1 = analyze_cycle(pair, vehicle=both, surface=SMOOTH, wheel_mass=mp, speed_m_s=v)
    r2 = analyze_cycle(pair, vehicle=front, surface=SMOOTH, wheel_mass=mp, speed_m_s=v)
    r3 = analyze_cycle(pair, vehicle=chain, surface=SMOOTH, wheel_mass=mp, speed_m_s=v)
    single = 0.5 * math.sin(2 * math.pi / n) * mp.inertia_kg_m2 * v * v / (a * a)
    np.testing.assert_allclose(r1.torque_peak_Nm, single, rtol=1e-8)
    np.testing.assert_allclose(r2.torque_peak_Nm, 2 * single, rtol=1e-8)
    np.testing.assert_allclose(r3.chain_torque_peak_Nm, 2 * single, rtol=1e-8)
    assert r1.lift_off_speed_m_s is None


def test_eccentric_circle_lift_off_speed():
    """An unbalanced rotor unloads when m e omega^2 = W + m g (centripetal force).

    A circle turning about an axle e below its centre: with the centre straight up the
    contact is at the least radius R - e (slope 0), omega = v/(R - e), so
    v_lift = (R - e) sqrt((W + m g)/(m e)).
    """
    R, e, body = 0.1, 0.03, 0.5
    w = rs.Wheel.circle(R, axle=(0.0, -e))
    pair, mp = rs.track_for(w), w.mass_properties(0.02, 700.0)
    res = analyze_cycle(pair, vehicle=one_axle(body), surface=SMOOTH, wheel_mass=mp, speed_m_s=0.5)
    m = mp.mass_kg
    expected = (R - e) * math.sqrt((body * G + m * G) / (m * e))
    # The least over the nodes; the minimum is flat to second order there: 1e-6.
    np.testing.assert_allclose(res.lift_off_speed_m_s, expected, rtol=1e-6)


def test_constant_torque_ripple_of_a_coasting_square():
    """No losses, centred wheel: energy is conserved, (M + m + I/r^2) v^2 = const.

    So v is least where r is least (r = a, face down) and greatest at the cusp (r = a sqrt 2);
    the mean speed over an arch is P / int dx/v, with r = a cosh(x/a) (Hall & Wagon 1992).
    """
    a, v_mean, body = 0.3, 0.6, 1.5
    pair, mp = polygon_case(4, a)
    res = analyze_cycle(pair, vehicle=one_axle(body), surface=SMOOTH, wheel_mass=mp,
                        speed_m_s=v_mean)
    M, J = body + mp.mass_kg, mp.inertia_kg_m2

    def inv_v(x, C=1.0):  # 1/v with v = C / sqrt(M + J / r^2)
        r = a * math.cosh(x / a)
        return math.sqrt(M + J / (r * r)) / C

    xc = a * math.asinh(1.0)
    # v_mean = 2 xc / int dx/v = C 2 xc / int (1/v at C = 1) dx
    C = v_mean * quad(inv_v, -xc, xc, epsabs=0, epsrel=1e-13)[0] / (2 * xc)
    v_lo = C / math.sqrt(M + J / a**2)
    v_hi = C / math.sqrt(M + J / (2 * a * a))
    assert res.constant_torque_Nm == 0.0
    # Trapezoid time average on ~2000 sorted nodes (error ~ h^2): 1e-6 relative.
    np.testing.assert_allclose(res.constant_torque_ripple, (v_hi - v_lo) / v_mean, rtol=1e-6)


def test_analytic_agrees_with_finite_differences_of_the_solved_kinematics():
    """Independent route: differentiate the solver's wheel angle along x(t) = v t numerically.

    Ellipse about a focus (centre of mass off the axle), one driven axle at steady speed,
    no rolling resistance. Checks:
    * omega, alpha against 5-point differences of theta(x(t));
    * shaft power against d/dt of the wheel's energy from König's theorem,
      E = m |v_G|^2 / 2 + I_G omega^2 / 2 + m g y_G with I_G = I_A - m |c|^2 (parallel axis)
      and v_G differenced from the centre-of-mass path (the axle load W does no work at
      constant axle height, the body moves at constant speed);
    * the normal load against W + m g + m a_Gy and m a_Gx resolved on the track normal.
    """
    a_, b_ = 0.05, 0.04
    c = math.sqrt(a_ * a_ - b_ * b_)
    w = rs.Wheel.ellipse((a_, b_), axle=(c, 0.0))
    pair, mp = rs.track_for(w), w.mass_properties(0.012, 700.0)
    v, body = 0.3, 0.4
    res = analyze_cycle(pair, vehicle=one_axle(body), surface=SMOOTH, wheel_mass=mp, speed_m_s=v)
    x0 = res.x_m[::7]
    h = 2e-4  # s; the motion's time scale r/v ~ 0.07 s, truncation (h/tau)^4 ~ 1e-11
    k = np.arange(-4, 5)
    X = x0[:, None] + v * h * k[None, :]
    th = pair.wheel_angle(X)
    cx0, cy0 = mp.com_m
    gx = X + cx0 * np.cos(th) + cy0 * np.sin(th)
    gy = -cx0 * np.sin(th) + cy0 * np.cos(th)

    def d1(f):  # 5-point first derivative at the 5 central columns
        return (f[:, :-4] - 8 * f[:, 1:-3] + 8 * f[:, 3:-1] - f[:, 4:]) / (12 * h)

    def d2(f):
        return (-f[:, :-4] + 16 * f[:, 1:-3] - 30 * f[:, 2:-2] + 16 * f[:, 3:-1] - f[:, 4:]) / (12 * h * h)

    omega = d1(th)  # columns: k = -2..2
    alpha = d2(th)[:, 2]
    sel = slice(None, None, 7)
    np.testing.assert_allclose(omega[:, 2], res.shaft_speed_rad_s[0][sel], rtol=1e-8)
    amax = float(np.max(np.abs(res.shaft_accel_rad_s2)))
    # theta carries ~1e-13 rad table error: /h^2 -> ~3e-6 rad/s^2 against alpha ~ 1e2.
    np.testing.assert_allclose(alpha, res.shaft_accel_rad_s2[0][sel], atol=1e-6 * amax)
    m, IA = mp.mass_kg, mp.inertia_kg_m2
    IG = IA - m * (cx0 * cx0 + cy0 * cy0)
    vgx, vgy = d1(gx), d1(gy)
    E = 0.5 * m * (vgx**2 + vgy**2) + 0.5 * IG * omega**2 + m * G * gy[:, 2:-2]
    P_fd = (E[:, 0] - 8 * E[:, 1] + 8 * E[:, 3] - E[:, 4]) / (12 * h)
    pmax = float(np.max(np.abs(res.power_W)))
    np.testing.assert_allclose(res.power_W[0][sel], P_fd, atol=1e-5 * pmax)
    agx, agy = d2(gx)[:, 2], d2(gy)[:, 2]
    Fx = m * agx
    Fy = body * G + m * G + m * agy
    s = pair.track.slope(x0)
    N = (Fy - s * Fx) / np.sqrt(1 + s * s)
    np.testing.assert_allclose(res.normal_load_N[0][sel], N, atol=1e-6 * float(np.max(N)))


def test_result_to_dict_plain_values():
    pair, mp = polygon_case(4)
    d = analyze_cycle(pair, vehicle=one_axle(), surface=SMOOTH, wheel_mass=mp, speed_m_s=0.5).to_dict()
    assert isinstance(d["torque_peak_Nm"], float)
    assert d["lift_off_speed_m_s"] is None


def test_massless_wheel_has_no_torque_at_steady_speed():
    """With no mass, no rolling resistance and nothing to push, the shaft carries no torque."""
    pair, _ = polygon_case(5)
    res = analyze_cycle(pair, vehicle=one_axle(), surface=SMOOTH, wheel_mass=None, speed_m_s=0.5)
    assert res.torque_peak_Nm == 0.0


def test_com_on_axle_never_lifts_off():
    """An ideal pair keeps the axle level: with the centre of mass on it, N = W + m g always."""
    mp = MassProperties(mass_kg=1.0, inertia_kg_m2=0.05, com_m=(0.0, 0.0), area_m2=0.1)
    pair, _ = polygon_case(6)
    res = analyze_cycle(pair, vehicle=one_axle(3.0), surface=SMOOTH, wheel_mass=mp, speed_m_s=5.0)
    assert res.lift_off_speed_m_s is None
    np.testing.assert_allclose(res.normal_load_N[0] * np.sqrt(1 + pair.track.slope(res.x_m) ** 2),
                               (3.0 + 1.0) * G, rtol=1e-12)


def test_constant_shaft_speed_torque_on_the_hexagon_closed_form():
    """Constant shaft speed omega on a regular n-gon: v = omega r, a = omega^2 r dr/dx.

    The wheel's angular acceleration is then zero, so each driven shaft only pushes the
    vehicle: T = M a r / n_driven = M omega^2 r^2 r' / n_driven, with r = a_p cosh(x/a_p) and
    r' = sinh(x/a_p) on an arch (Hall & Wagon 1992). Its peak is at the cusp, where
    cosh = sec(pi/n) and sinh = tan(pi/n):  T_peak = M omega^2 a_p^2 sec^2(pi/n) tan(pi/n) / n_d
    (derived; no rolling resistance here). The cycle's one-sided nodes at each cusp carry
    the limit, so the peak is checked to 1e-6.
    """
    from ridesim.assess.analytic import shaft_speed_cycle
    from ridesim.scenario.build import solve_scenario, wheel_mass
    from ridesim.scenario.load import scenario_from_dict

    ap, n, om = 0.12, 6, 3.0
    sc = scenario_from_dict({
        "wheel": {"shape": "polygon", "sides": n, "apothem_m": ap},
        "vehicle": {"body_mass_kg": 8.0, "axles": 1},
        "drive": {"mode": "shaft_speed", "shaft_speed_rad_s": om},
    })
    pair = solve_scenario(sc)
    mp = wheel_mass(sc, pair.wheel)
    res = shaft_speed_cycle(pair, sc, mp, om)
    M = 8.0 + mp.mass_kg
    c, t = 1 / math.cos(math.pi / n), math.tan(math.pi / n)
    assert res["peak_Nm"] == pytest.approx(M * om**2 * ap**2 * c**2 * t, rel=1e-6)
    # The figures come from the cycle's quadrature nodes: the nearest to an arch top lies
    # within half a node spacing h (about 0.4 mm here), where r/a - 1 = (h/a)^2/2 < 1e-5.
    assert res["speed_min_m_s"] == pytest.approx(om * ap, rel=1e-5)
    # One-sided nodes sit 1e-10 of a revolution from each cusp.
    assert res["speed_max_m_s"] == pytest.approx(om * ap * c, rel=1e-6)  # surge sec(pi/n)


@pytest.mark.parametrize("coupled", [True, False])
def test_figures_are_per_motor(coupled):
    """Motors sit on shafts: a coupled train has one motor, uncoupled driven axles one each.

    Two round wheels on a flat road at steady speed, rolling resistance only: the shafts
    together deliver R C_rr N with N the whole weight (Gillespie 1992 [memory]), at v / R.
    One motor on a coupled train delivers all of it; two uncoupled motors half each (equal
    axle loads). The constant torque that holds the speed (energy balance over a revolution)
    is the same per-motor figure, and the per-wheel figure is half the total either way.
    """
    R, v, crr, body = 0.2, 1.0, 0.01, 20.0
    w = rs.Wheel.circle(R)
    pair, mp = rs.track_for(w), MassProperties(1.5, 0.03, (0.0, 0.0), math.pi * R * R)
    veh = VehicleSpec(body_mass_kg=body, axles=2, wheelbase_m=2 * math.pi * R, coupled=coupled)
    res = analyze_cycle(pair, vehicle=veh, surface=SurfaceSpec(friction=1.0, rolling_resistance=crr),
                        wheel_mass=mp, speed_m_s=v)
    total = R * crr * (body + 2 * 1.5) * G
    per_motor = total if coupled else total / 2
    assert res.motors == (((0, 1),) if coupled else ((0,), (1,)))
    np.testing.assert_allclose(res.torque_peak_Nm, per_motor, rtol=1e-8)
    np.testing.assert_allclose(res.torque_rms_Nm, per_motor, rtol=1e-8)
    np.testing.assert_allclose(res.constant_torque_Nm, per_motor, rtol=1e-8)
    np.testing.assert_allclose(res.power_mean_W, per_motor * v / R, rtol=1e-8)
    np.testing.assert_allclose(res.wheel_torque_peak_Nm, total / 2, rtol=1e-8)
    d = res.to_dict()
    assert [m["name"] for m in d["motors"]] == (["coupled train, axles 0+1"] if coupled
                                                else ["axle 0 shaft", "axle 1 shaft"])
    np.testing.assert_allclose([m["peak_Nm"] for m in d["motors"]], per_motor, rtol=1e-8)
