"""The part list of an evaluation (``Evaluation.parts``) as a sequence whose rows are made when
read, so a 16-bit string's 65,536 parts cost three arrays, not 65,536 dicts."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from .network import PartList


class PartRows(Sequence):
    """``{"id", "ohms", "role", "power_max", "power_code"}`` per part, in display order.

    Parameters
    ----------
    parts : list[Part] or PartList
    power_max : ndarray, shape (n_parts,), W (NaN when not worked out)
    power_code : ndarray of int, shape (n_parts,) (−1 when not worked out)
    """

    def __init__(self, parts, power_max: np.ndarray, power_code: np.ndarray) -> None:
        self._parts = PartList.of(parts)
        self._power_max = np.asarray(power_max, dtype=float)
        self._power_code = np.asarray(power_code, dtype=np.int64)

    def __len__(self) -> int:
        return len(self._parts)

    def _row(self, i: int, part) -> dict[str, Any]:
        return {"id": part.part_id, "ohms": part.ohms, "role": part.role,
                "power_max": float(self._power_max[i]), "power_code": int(self._power_code[i])}

    def __getitem__(self, i):  # type: ignore[override]
        if isinstance(i, slice):
            return [self[j] for j in range(*i.indices(len(self)))]
        i = i + len(self) if i < 0 else i
        return self._row(i, self._parts[i])

    def __iter__(self):
        for i, part in enumerate(self._parts):
            yield self._row(i, part)

    def __eq__(self, other) -> bool:
        return isinstance(other, Sequence) and list(self) == list(other)

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        return f"PartRows({len(self)} parts)"
