"""Memory limits checked before work starts: a request that would need more than a safe share of
this machine's memory is refused with a message naming the field, instead of failing midway.

The per-code evaluation keeps every per-code array (outputs, output resistance, reference current,
INL/DNL, part powers) and the solver's working arrays at once; measured peak use is about 540 B
(ladders) to 640 B (segmented) per code at 20 bits, so ``BYTES_PER_CODE`` is taken a little above.
"""

from __future__ import annotations

import os
import sys

from .errors import DesignError

BYTES_PER_CODE = 800
"""Peak memory of one evaluated code, bytes (measured 540–640 B at 2^20 codes, rounded up)."""

SAFE_SHARE = 0.25
"""Fraction of the machine's physical memory one evaluation may use."""

FALLBACK_MEMORY = 8 * 2**30
"""Physical memory assumed when the system does not say, bytes."""


def machine_memory() -> int:
    """Physical memory of this machine, bytes: ``sysconf`` on Linux and macOS, the Win32
    ``GlobalMemoryStatusEx`` on Windows, ``FALLBACK_MEMORY`` when neither answers."""
    try:
        return int(os.sysconf("SC_PAGE_SIZE")) * int(os.sysconf("SC_PHYS_PAGES"))
    except (AttributeError, ValueError, OSError):
        pass
    return _windows_memory() or FALLBACK_MEMORY


def _windows_memory() -> int | None:
    """Total physical memory from Windows, bytes; None elsewhere or on failure."""
    if sys.platform != "win32":
        return None
    import ctypes

    class _Status(ctypes.Structure):
        _fields_ = [("length", ctypes.c_ulong), ("load", ctypes.c_ulong),
                    ("total_phys", ctypes.c_ulonglong), ("avail_phys", ctypes.c_ulonglong),
                    ("total_page", ctypes.c_ulonglong), ("avail_page", ctypes.c_ulonglong),
                    ("total_virtual", ctypes.c_ulonglong), ("avail_virtual", ctypes.c_ulonglong),
                    ("avail_extended", ctypes.c_ulonglong)]

    status = _Status()
    status.length = ctypes.sizeof(_Status)
    try:
        ok = ctypes.windll.kernel32.GlobalMemoryStatusEx(ctypes.byref(status))  # type: ignore[attr-defined]
    except (AttributeError, OSError):
        return None
    return int(status.total_phys) if ok and status.total_phys else None


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
