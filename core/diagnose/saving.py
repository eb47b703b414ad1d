"""The as-built design file of a diagnosis: the design, its as-built version and, with a repair
plan, the repaired board (the best explanation with the changes made) and the plan itself (the
file's ``[settings.repair]`` table, the same keys as ``rungwise diagnose --repair`` prints)."""

from __future__ import annotations

import math
from typing import Any

from ..designfile import DesignFile
from ..errors import RungwiseError
from ..topologies import build
from .diagnosis import Diagnosis


def _plain(obj: Any) -> Any:
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    if isinstance(obj, dict):
        return {k: _plain(v) for k, v in obj.items() if _plain(v) is not None}
    if isinstance(obj, list):
        return [_plain(v) for v in obj]
    return obj


def as_built_file(d: Diagnosis) -> DesignFile:
    """The design file to save (see the module docstring).

    Raises
    ------
    RungwiseError
        No part explains the curve, so there is no as-built design.
    """
    if d.as_built is None:
        raise RungwiseError("no part explains the curve, so there is no as-built design")
    candidates, settings = [d.design, d.as_built], {}
    plan = d.repair
    if plan is not None:
        settings["repair"] = _plain(plan.to_dict())
        if plan.actions and d.joint is not None and d.joint.explanations:
            best = d.joint.explanations[0]
            values = {p.part_id: p.ohms for p in build(d.design).parts}
            board = d.design.replace(
                parts={**d.design.parts,
                       **{pid: values[pid] * (1.0 + dev) for pid, dev in best.parts.items()}},
                name=f"{d.design.label}, as explained")
            candidates.append(plan.repaired(board))
    return DesignFile(candidates=candidates, settings=settings)
