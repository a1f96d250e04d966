"""The report job: one self-contained HTML page of a scenario for a client and an engineer.

Runs the check, the motor sizing and (unless told not to) the simulation, draws the
pictures with :func:`ridesim.jobs.render.render_scenario` (the first ones side by side with
that work, on idle cores), and writes the page built by :func:`ridesim.render.report.report_page`.
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["write_report"]


def write_report(sc, out_dir: str | Path, *, simulate: bool = True, clip_s: float = 4.0,
                 progress=None) -> tuple[Path, dict]:
    """Write ``report.html`` (and its pictures beside it) for a scenario.

    Parameters
    ----------
    sc : Scenario
        Validated scenario.
    out_dir : str or Path
        Output folder.
    simulate : bool
        Include the rigid-body simulation (bounce, slip, torque, comfort) and replay it in
        the clip.
    clip_s : float
        Clip length [s].
    progress : callable, optional
        ``progress(fraction)`` while the clip is drawn.

    Returns
    -------
    (Path, dict)
        The page and the figures it shows (``check``, ``size_motor``, ``simulate``).
    """
    from ridesim.export.results import json_ready, write_text_atomic
    from ridesim.jobs.check import check_scenario
    from ridesim.jobs.render import render_scenario
    from ridesim.jobs.size_motor import size_motor
    from ridesim.render.report import report_page

    out = Path(out_dir)
    if sc.path.is_hub:
        return _hub_report(sc, out, simulate=simulate, clip_s=clip_s, progress=progress)
    figures: dict = {}

    def figures_and_simulation():
        # Run while the pictures that need no simulation are drawn (side by side, idle cores).
        figures["check"] = json_ready(check_scenario(sc).to_dict())
        figures["size_motor"] = json_ready(size_motor(sc).to_dict())
        if not simulate:
            return None
        from ridesim.jobs.simulate import simulate as run_sim

        sim = run_sim(sc)
        figures["simulate"] = json_ready(sim.to_dict())
        return sim

    items = render_scenario(sc, out / "pictures", simulate=simulate, clip_s=clip_s,
                            progress=progress, alongside=figures_and_simulation)
    page = write_text_atomic(out / "report.html", report_page(sc, figures, items))
    return page, figures


def _hub_report(sc, out: Path, *, simulate: bool, clip_s: float, progress) -> tuple[Path, dict]:
    """The report of a hub pair (or a gear pair): check, motor sizing, simulation, pictures."""
    from ridesim.export.results import json_ready, write_text_atomic
    from ridesim.jobs.check import check_scenario
    from ridesim.jobs.hub import simulate_hub, size_motor_hub
    from ridesim.jobs.render import render_scenario
    from ridesim.render.report import hub_report_page

    figures = {"check": json_ready(check_scenario(sc).to_dict()),
               "size_motor": json_ready(size_motor_hub(sc).to_dict())}
    if simulate:
        figures["simulate"] = json_ready(simulate_hub(sc).to_dict())
    items = render_scenario(sc, out / "pictures", simulate=False, clip_s=clip_s, progress=progress)
    page = write_text_atomic(out / "report.html", hub_report_page(sc, figures, items))
    return page, figures

