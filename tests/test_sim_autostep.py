"""``simulate(refine_on_creep=True)`` (``ridesim simulate --auto-step``): a run that creeps is
rerun at a fifth of its step, and the rerun is judged against the closed-form shaft torque of a
rounded square held at constant shaft speed (energy balance, ``tau = M omega^2 r dr/dtheta``,
with ``dx = r dtheta`` from Hall & Wagon, "Roads and Wheels", Mathematics Magazine 65(5),
1992; derived in tests/test_sim_creep.py, whose ``exact_torque`` evaluates it).
"""

import pytest
from test_sim_creep import exact_torque, rounded_square

from ridesim.jobs.simulate import REFINE_STEP_FACTOR, simulate
from ridesim.metrics import ride
from ridesim.scenario.load import scenario_from_dict


def test_a_creeping_run_is_rerun_at_a_fifth_of_the_step_and_meets_the_closed_form():
    # At 0.5 rad/s, 1 ms and 30 iterations this square loses its phase (test_sim_creep); at
    # 0.2 ms it keeps it and its r.m.s. torque (measured 1.07 to 1.12 times the exact one).
    om = 0.5
    sc = scenario_from_dict(rounded_square(om))
    res = simulate(sc, refine_on_creep=True)
    assert res.probes.dt_s == pytest.approx(REFINE_STEP_FACTOR * sc.run.timestep_s, rel=1e-12)
    assert not res.creeps and res.findings == []
    assert abs(res.phase_drift_rad) < ride.PHASE_DRIFT_FINDING_RAD
    rms, _ = exact_torque(om)
    assert res.torque[0]["rms_Nm"] / rms == pytest.approx(1.0, abs=0.15)
    note = [c for c in res.cautions if c.startswith("run.timestep_s = 0.0002 s was chosen")]
    assert len(note) == 1 and "at 0.001 s the run crept" in note[0]


def test_a_run_that_keeps_its_phase_is_not_rerun():
    sc = scenario_from_dict(rounded_square(2.0))
    res = simulate(sc, refine_on_creep=True)
    assert res.probes.dt_s == sc.run.timestep_s
    assert not res.creeps
    assert not any("was chosen" in c for c in res.cautions)
    rms, _ = exact_torque(2.0)
    assert res.torque[0]["rms_Nm"] / rms == pytest.approx(1.0, abs=0.15)
