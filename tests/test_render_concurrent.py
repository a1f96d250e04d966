"""Pictures drawn side by side in forked processes are the files drawn one by one.

The reference is the same job drawn in this process, picture after picture: every file
(PNG bytes, the index with its captions) must be identical, and the caller's matplotlib
backend and settings untouched.
"""

import threading
import warnings
from pathlib import Path

import pytest

from ridesim.jobs.render import _Drawing, render_scenario
from ridesim.scenario.load import load_scenario

ROOT = Path(__file__).resolve().parent.parent


def test_concurrent_pictures_are_the_same_bytes_as_one_by_one(tmp_path):
    import matplotlib as mpl

    backend, rc = mpl.get_backend(), dict(mpl.rcParams)
    sc = load_scenario(ROOT / "scenarios" / "ellipse_pull_toy.toml")
    one = render_scenario(sc, tmp_path / "one", clip=False, workers=1)
    two = render_scenario(sc, tmp_path / "two", clip=False, workers=2)
    assert [p.name for p, _ in one] == [p.name for p, _ in two]
    assert [c for _, c in one] == [c for _, c in two]
    names = sorted(p.name for p in (tmp_path / "one").iterdir())
    assert names == sorted(p.name for p in (tmp_path / "two").iterdir())
    assert len([n for n in names if n.endswith(".png")]) == 5
    for name in names:
        assert (tmp_path / "one" / name).read_bytes() == (tmp_path / "two" / name).read_bytes(), name
    assert mpl.get_backend() == backend
    assert dict(mpl.rcParams) == rc


def _warns(n):
    warnings.warn(f"trouble {n}", RuntimeWarning, stacklevel=1)
    return Path(f"p{n}.png"), f"caption {n}"


def _fails():
    raise ValueError("no picture")


def _draw(calls, cores, added=()):
    """The pictures drawn as render_scenario draws them: started, some added after the fork."""
    drawing = _Drawing(cores)
    try:
        drawing.start(calls)
        for call in added:
            drawing.add(call)
        return drawing.finish()
    finally:
        drawing.close()


def test_drawing_keeps_the_order_ready_items_and_warnings():
    calls = [(_warns, (0,), {}), (Path("ready.png"), "ready"), (_warns, (2,), {})]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        items = _draw(calls, 2, added=[(_warns, (3,), {}), (Path("late.png"), "late")])
    assert items == [(Path("p0.png"), "caption 0"), (Path("ready.png"), "ready"),
                     (Path("p2.png"), "caption 2"), (Path("p3.png"), "caption 3"),
                     (Path("late.png"), "late")]
    assert sorted(str(w.message) for w in caught) == ["trouble 0", "trouble 2", "trouble 3"]
    assert all(issubclass(w.category, RuntimeWarning) for w in caught)


def test_each_picture_is_drawn_once_by_whoever_takes_it(tmp_path):
    # Every picture is queued for the drawing process and this process takes from the back
    # what it has not begun: each is drawn exactly once (a file a drawing; appending to a
    # name twice would leave two lines).
    def calls(n):
        return [(_mark, (tmp_path / f"m{i}.txt",), {}) for i in range(n)]

    items = _draw(calls(6), 2, added=calls(9)[6:])
    assert [p.name for p, _ in items] == [f"m{i}.txt" for i in range(9)]
    assert all((tmp_path / f"m{i}.txt").read_text() == "x\n" for i in range(9))


def _mark(path):
    with open(path, "a", encoding="utf-8") as f:
        f.write("x\n")
    return path, "marked"


def test_drawing_raises_a_picture_error_and_draws_serially_beside_threads():
    with pytest.raises(ValueError, match="no picture"), warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the other picture may be drawn here, warning as it does
        _draw([(_fails, (), {}), (_warns, (1,), {})], 2)
    out = []
    th = threading.Thread(target=lambda: out.extend(_draw([(_warns, (1,), {})] * 2, 2)))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        th.start()
        th.join()
    assert out == [(Path("p1.png"), "caption 1")] * 2


@pytest.mark.parametrize("load, cpu_s, expect", [
    (0.1, 0.0, 2),    # quiet machine: both cores
    (4.8, 0.0, 1),    # busy with other work: one by one
    (1.0, 1e4, 2),    # the load is this long-running process itself (its share ~1)
    (1.0, 0.0, 1),    # the load is another process: one core left, drawn here
])
def test_idle_cores_follow_the_load_average_less_this_process(monkeypatch, load, cpu_s, expect):
    import os
    import time

    monkeypatch.setattr(os, "cpu_count", lambda: 2)
    monkeypatch.setattr(os, "getloadavg", lambda: (load, load, load))
    monkeypatch.setattr(time, "process_time", lambda: cpu_s)
    from ridesim.jobs.render import idle_cores

    assert idle_cores() == expect


def test_simulated_pictures_sent_after_the_fork_match_and_the_callers_work_runs_once(tmp_path,
                                                                                     monkeypatch):
    # The simulation's pictures are made after the drawing processes are forked (sent to them
    # pickled); the caller's work (``alongside``) runs once, meanwhile, and its simulation is
    # the one plotted: none is run again.
    import ridesim.jobs.simulate as sim_job

    sc = load_scenario(ROOT / "scenarios" / "hexagon_trolley.toml")
    res = sim_job.simulate(sc)
    calls = []

    def alongside():
        calls.append(1)
        return res

    def no_second_run(*_a, **_k):
        raise AssertionError("the simulation was run again")

    monkeypatch.setattr(sim_job, "simulate", no_second_run)
    one = render_scenario(sc, tmp_path / "one", clip=False, simulate=True, workers=1, alongside=alongside)
    two = render_scenario(sc, tmp_path / "two", clip=False, simulate=True, workers=2, alongside=alongside)
    assert calls == [1, 1]
    assert [c for _, c in one] == [c for _, c in two]
    names = sorted(p.name for p in (tmp_path / "one").iterdir())
    assert {"torque.png", "bounce.png", "seat.png"} <= set(names)
    for name in names:
        assert (tmp_path / "one" / name).read_bytes() == (tmp_path / "two" / name).read_bytes(), name
