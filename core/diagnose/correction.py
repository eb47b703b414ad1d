"""Correction table for firmware: for each wanted output level, the measured code that comes closest.

Wanted levels lie on the measured endpoint line (the line through the outputs of the lowest and the
highest measured code), evenly spaced: by default one level per code between those codes, so the
table maps a wanted code m to the code to send. Measured codes are chosen from, and — when given —
estimated outputs of missing codes (the diagnosis passes the bit-weight fit's prediction); a row
that uses an estimate is marked. Codes never chosen are listed as codes to skip.

Bound: because both ends of the line are measured levels, every wanted level lies between two
available levels, so the chosen code is off by at most half the largest gap between neighbouring
available levels (sorted by voltage); ``bound_lsb`` states it in LSB of the wanted scale. INL after
correction is the error of the chosen level against its wanted level, in that LSB (for an
estimated level, as estimated).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from .reading import MeasurementError

MAX_LEVELS = 1 << 24
"""Most wanted levels a table may have."""


@dataclass(frozen=True, eq=False)
class CorrectionTable:
    """Result of :func:`correction_table`.

    Attributes
    ----------
    wanted : ndarray, shape (n_levels,), volts — wanted output levels
    code : ndarray of int, shape (n_levels,) — code to send for each wanted level
    achieved : ndarray, shape (n_levels,), volts — measured output of that code
    inl_lsb : ndarray, shape (n_levels,), LSB — (achieved − wanted) / LSB after correction
    lsb : float — spacing of the wanted levels, volts
    bound_lsb : float — the stated bound on |inl_lsb| (see the module docstring)
    skip : ndarray of int — measured codes the table never uses
    estimated : ndarray of bool, shape (n_levels,) — the chosen code's output is an estimate
    """

    wanted: np.ndarray
    code: np.ndarray
    achieved: np.ndarray
    inl_lsb: np.ndarray
    lsb: float
    bound_lsb: float
    skip: np.ndarray
    estimated: np.ndarray

    @property
    def max_abs_inl(self) -> float:
        """Largest |INL| after correction, LSB."""
        return float(np.max(np.abs(self.inl_lsb)))


def correction_table(codes: np.ndarray, volts: np.ndarray, n_levels: int | None = None,
                     extra_codes: np.ndarray | None = None, extra_volts: np.ndarray | None = None
                     ) -> CorrectionTable:
    """Nearest measured code for each wanted level on the endpoint line.

    Parameters
    ----------
    codes : ndarray of int, shape (n,) — measured codes, ascending
    volts : ndarray, shape (n,), volts — their outputs (means of repeats)
    n_levels : int, optional — number of wanted levels (default codes[-1] − codes[0] + 1)
    extra_codes, extra_volts : ndarray, shape (n_extra,), optional — estimated outputs of codes
        that were not measured, used as further choices

    Returns
    -------
    CorrectionTable

    Raises
    ------
    MeasurementError
        Fewer than two codes, equal end outputs, or fewer than two levels asked for.
    """
    c = np.asarray(codes, dtype=np.int64)
    v = np.asarray(volts, dtype=float)
    if c.size < 2 or v[-1] == v[0]:
        raise MeasurementError("a correction table needs two codes with different outputs")
    n_levels = int(c[-1] - c[0] + 1) if n_levels is None else int(n_levels)
    if not 2 <= n_levels <= MAX_LEVELS:
        raise MeasurementError(f"the number of wanted levels must be 2 … {MAX_LEVELS}, "
                               f"not {n_levels}")
    wanted = v[0] + (v[-1] - v[0]) * np.arange(n_levels) / (n_levels - 1)
    lsb = float((v[-1] - v[0]) / (n_levels - 1))
    ec = np.zeros(0, np.int64) if extra_codes is None else np.asarray(extra_codes, np.int64)
    ev = np.zeros(0) if extra_volts is None else np.asarray(extra_volts, dtype=float)
    all_c = np.concatenate([c, ec])
    all_v = np.concatenate([v, ev])
    is_estimate = np.arange(all_c.size) >= c.size
    order = np.argsort(all_v, kind="stable")
    levels = all_v[order]
    hi = np.clip(np.searchsorted(levels, wanted), 1, levels.size - 1)
    lo = hi - 1
    pick_hi = np.abs(levels[hi] - wanted) < np.abs(levels[lo] - wanted)
    chosen = order[np.where(pick_hi, hi, lo)]
    achieved = all_v[chosen]
    inside = (levels >= min(v[0], v[-1])) & (levels <= max(v[0], v[-1]))
    gaps = np.diff(levels[inside])
    bound = float(0.5 * gaps.max() / abs(lsb)) if gaps.size else 0.0
    used = np.zeros(all_c.size, dtype=bool)
    used[chosen] = True
    return CorrectionTable(wanted=wanted, code=all_c[chosen], achieved=achieved,
                           inl_lsb=(achieved - wanted) / lsb, lsb=lsb, bound_lsb=bound,
                           skip=c[~used[: c.size]], estimated=is_estimate[chosen])


def to_csv(table: CorrectionTable) -> str:
    """CSV text, one row per wanted level:
    ``wanted_index,wanted_volts,code,output_volts,error_lsb,estimated`` (estimated: 1 when the
    code was not measured and its output is an estimate)."""
    lines = ["wanted_index,wanted_volts,code,output_volts,error_lsb,estimated"]
    for i, (w, code, a, e, est) in enumerate(zip(table.wanted, table.code, table.achieved,
                                                 table.inl_lsb, table.estimated, strict=True)):
        lines.append(f"{i},{float(w)!r},{int(code)},{float(a)!r},{float(e):.6f},{int(est)}")
    return "\n".join(lines) + "\n"


def c_identifier(text: str) -> str:
    """A C identifier made from ``text`` (file stem): other characters become ``_``."""
    ident = re.sub(r"[^0-9A-Za-z_]", "_", text).strip("_") or "dac_correction"
    return f"t_{ident}" if ident[0].isdigit() else ident


def _rows(values: list[str], per_row: int = 16) -> list[str]:
    return [", ".join(values[i:i + per_row]) for i in range(0, len(values), per_row)]


def to_c_header(table: CorrectionTable, name: str = "dac_correction", note: str = "") -> str:
    """A C header holding the table as a ``static const`` array indexed by wanted level, and the
    codes it never sends as ``<name>_skip`` (when there are any).

    Parameters
    ----------
    table : CorrectionTable
    name : str — array name (made a valid C identifier)
    note : str — one line put into the leading comment (e.g. the measurement's name)
    """
    ident = c_identifier(name)
    top = int(table.code.max())
    ctype = "uint8_t" if top < 1 << 8 else "uint16_t" if top < 1 << 16 else "uint32_t"
    guard = f"{ident.upper()}_H"
    values = [str(int(x)) for x in table.code]
    rows = _rows(values)
    skip = [str(int(x)) for x in table.skip]
    comment = [
        f"/* Correction table: index = wanted level (0 … {len(values) - 1}), evenly spaced from "
        f"{table.wanted[0]:.6g} V to {table.wanted[-1]:.6g} V;",
        " * value = the code to send. Written by Rungwise from measured outputs"
        f" ({int(table.estimated.sum())} entries use an estimated output of an unmeasured code).",
        f" * Max |INL| after correction {table.max_abs_inl:.3f} LSB (bound {table.bound_lsb:.3f}"
        f" LSB); {table.skip.size} measured codes are never used.",
    ]
    if note:
        comment.append(" * " + note.replace("*/", "* /"))
    comment.append(" */")
    return "\n".join([
        *comment,
        f"#ifndef {guard}",
        f"#define {guard}",
        "",
        "#include <stdint.h>",
        "",
        f"#define {ident.upper()}_LEN {len(values)}u",
        "",
        f"static const {ctype} {ident}[{ident.upper()}_LEN] = {{",
        *[f"    {r}," for r in rows],
        "};",
        "",
        *(["/* Measured codes the table never sends. */",
           f"#define {ident.upper()}_SKIP_LEN {len(skip)}u",
           f"static const {ctype} {ident}_skip[{ident.upper()}_SKIP_LEN] = {{",
           *[f"    {r}," for r in _rows(skip)], "};", ""] if skip else []),
        f"#endif /* {guard} */",
        "",
    ])
