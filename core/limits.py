"""Memory limits checked before work starts: a request that would need more than a safe share of
this machine's memory is refused with a message naming the field, instead of failing midway.

The per-code evaluation keeps every per-code array (outputs, output resistance, reference current,
INL/DNL, part powers) and the solver's working arrays at once; measured peak use is about 540 B
(ladders) to 640 B (segmented) per code at 20 bits, so ``BYTES_PER_CODE`` is taken a little above.
"""

from __future__ import annotations

import os

from .errors import DesignError

BYTES_PER_CODE = 800
"""Peak memory of one evaluated code, bytes (measured 540–640 B at 2^20 codes, rounded up)."""

SAFE_SHARE = 0.25
"""Fraction of the machine's physical memory one evaluation may use."""

FALLBACK_MEMORY = 8 * 2**30
"""Physical memory assumed when the system does not say, bytes."""


def machine_memory() -> int:
    """Physical memory of this machine, bytes (``FALLBACK_MEMORY`` when unknown)."""
    try:
        return int(os.sysconf("SC_PAGE_SIZE")) * int(os.sysconf("SC_PHYS_PAGES"))
    except (AttributeError, ValueError, OSError):
        return FALLBACK_MEMORY


def _gb(n: float) -> str:
    return f"{n / 2**30:.1f} GB"


def check_evaluation(bits: int, budget: int | None = None) -> None:
    """Refuse a per-code evaluation of ``bits`` bits that would not fit a safe share of memory.

    Parameters
    ----------
    bits : int
        Resolution N (2^N codes are solved).
    budget : int, optional
        Bytes allowed; default ``SAFE_SHARE`` of :func:`machine_memory`.

    Raises
    ------
    DesignError
        Named ``bits``, giving the memory needed and allowed and the largest resolution that fits.
    """
    allowed = int(SAFE_SHARE * machine_memory()) if budget is None else int(budget)
    need = BYTES_PER_CODE * (1 << bits)
    if need <= allowed:
        return
    fits = max(1, (allowed // BYTES_PER_CODE).bit_length() - 1)
    raise DesignError("bits", f"{bits} bits need about {_gb(need)} to solve every code, more than the "
                      f"{_gb(allowed)} allowed here; choose "
                      f"{fits} bits or fewer")
