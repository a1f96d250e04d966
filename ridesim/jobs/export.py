"""The export job: cut files (SVG, CSV, DXF) and a cut list, following the scenario's ``[export]``."""

from __future__ import annotations

import math
from pathlib import Path

from ridesim.scenario.load import Scenario

__all__ = ["export_scenario", "export_periods"]


def export_periods(sc: Scenario, pair) -> int:
    """Track periods to draw: ``export.track_length_m`` or ``export.revolutions`` rounded up.

    Parameters
    ----------
    sc : Scenario
        Validated scenario.
    pair : RollingPair
        Its solved pair.

    Returns
    -------
    int
        Whole periods, at least 1 (default: one wheel revolution, ``pair.lobes``).
    """
    ex = sc.export
    if ex.track_length_m is not None:
        return max(1, math.ceil(ex.track_length_m / pair.track.period * (1 - 1e-12)))
    revs = 1.0 if ex.revolutions is None else ex.revolutions
    return max(1, math.ceil(revs * pair.lobes * (1 - 1e-12)))


def export_scenario(sc: Scenario, out: str | Path, *, section_m: float | None = None,
                    dxf: bool | None = None) -> dict:
    """Write the scenario's cut files into ``out``.

    Parameters
    ----------
    sc : Scenario
        Validated scenario.
    out : str or Path
        Output folder.
    section_m : float, optional
        Longest track piece [m]; default ``export.section_length_m``.
    dxf : bool, optional
        Write DXF too (default, None: yes; ridesim writes DXF itself, no extra needed).

    Returns
    -------
    dict
        ``files`` (paths written) and ``notes`` (lines for the user).
    """
    from ridesim.export.drawings import export_drawings
    from ridesim.scenario.build import solve_scenario

    notes: list[str] = []
    dxf = dxf is None or bool(dxf)
    pair = solve_scenario(sc)
    thick = sc.wheel.thickness_m if sc.wheel is not None else None
    if sc.path.is_hub:  # a wheel and the hub (or ring) it rolls on, each about its centre
        from ridesim.export.drawings import export_hub_drawings

        ex = sc.export
        files = export_hub_drawings(pair, out, name=sc.name, thickness_m=thick,
                                    title_lines=(sc.description,) if sc.description else (),
                                    dxf=dxf, hole_m=ex.axle_hole_m, flat_m=ex.axle_flat_m,
                                    kerf_m=ex.kerf_m, tol_m=ex.chord_tolerance_m)
        return {"files": [str(f) for f in files], "notes": notes}
    ex = sc.export
    files = export_drawings(
        pair, out, name=sc.name,
        max_section_m=ex.section_length_m if section_m is None else section_m,
        wheel_thickness_m=thick, title_lines=(sc.description,) if sc.description else (),
        axle_hole_m=ex.axle_hole_m, axle_flat_m=ex.axle_flat_m, kerf_m=ex.kerf_m,
        chord_tol_m=ex.chord_tolerance_m, periods=export_periods(sc, pair), dxf=dxf,
        wheels=sc.vehicle.axles * ex.rails, strips=ex.rails, sheet_m=ex.sheet_m)
    return {"files": [str(f) for f in files], "notes": notes}
