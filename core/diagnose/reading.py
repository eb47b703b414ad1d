"""Measured transfer curves: read a file of (code, output) readings into a :class:`Measurement`.

Accepted layout (one reading per line)::

    # lines starting with '#' are comments; '#' also ends a line early
    code, output_mV          <- optional header (see below)
    0,    0.41
    0x01, 13.29 mV
    2,    25.95

Rules, in the order they are applied:

* **Text**: UTF-8 (a byte-order mark is allowed); otherwise read as Latin-1. A file with NUL bytes is
  refused as binary. Files above :data:`MAX_FILE_BYTES` or with more than :data:`MAX_READINGS`
  readings are refused.
* **Separator**, chosen once per file from the first data line: ``;`` if it has one, else ``,``
  if it has one, else a tab, else runs of spaces. With ``;`` or tab separators a decimal comma
  (``12,5``) is accepted in the output column.
* **Header**: the first non-comment line is a header when its first field is not a readable code.
  The code column is the first named ``code…`` (else the first column); the output column is the
  first other column whose name contains ``v``, ``out`` or ``level`` (else the other first column).
  Other columns are ignored. A unit in the output column's name — ``mV``, ``uV``/``µV``, ``V`` as
  a word, in brackets or after ``_`` — is the unit of values written without one. A code column
  whose name contains ``bin`` reads plain strings of 0 and 1 as binary (MSB first); ``hex`` reads
  plain hexadecimal digits.
* **Without a header** a line holds exactly a code and an output (and, space-separated, its unit).
* **Codes**: decimal ``37``; hexadecimal ``0x25`` or ``25h``; binary ``0b100101``; ``_`` may group
  digits. A plain string of 0 and 1 is *decimal* unless the header says binary (``101`` is one
  hundred and one).
* **Outputs**: a number with an optional unit ``V``, ``mV``, ``uV``/``µV`` (default volts, or the
  header's unit). Non-finite numbers are refused.
* **Repeats** of a code are averaged; their sample standard deviation is kept. Missing codes are
  allowed.

Anything else raises :class:`MeasurementError` naming the line.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..bounded_read import read_at_most
from ..errors import RungwiseError

MAX_FILE_BYTES = 32 * 1024 * 1024
"""Largest measurement file read, bytes."""

MAX_READINGS = 1_000_000
"""Largest number of readings (data lines) read from one file."""

MAX_ABS_VOLTS = 1e6
"""Largest output magnitude accepted, volts."""

MAX_CODE_BITS = 24
"""Largest code width a reading may have, bits (codes up to 2^24 − 1)."""

UNIT_SCALE: dict[str, float] = {"V": 1.0, "mV": 1e-3, "uV": 1e-6, "µV": 1e-6, "μV": 1e-6}
"""Accepted output units and their value in volts (case matters only between ``m`` and ``M``)."""


class MeasurementError(RungwiseError, ValueError):
    """A measurement file (or a measured curve) cannot be used.

    Attributes
    ----------
    line : int or None
        1-based line number at fault, when one line is.
    source : str
        File name or label of the text.
    """

    def __init__(self, message: str, line: int | None = None, source: str = "measurement") -> None:
        where = f"{source}, line {line}" if line is not None else source
        super().__init__(f"{where}: {message}")
        self.line = line
        self.source = source
        self.reason = message


@dataclass(frozen=True, eq=False)
class Measurement:
    """A measured transfer curve, one entry per distinct measured code (ascending).

    Attributes
    ----------
    codes : ndarray of int64, shape (n_measured,)
        Measured codes, ascending, each once.
    volts : ndarray, shape (n_measured,), volts
        Mean output of each code's readings.
    spread : ndarray, shape (n_measured,), volts
        Sample standard deviation (ddof = 1) of each code's readings; NaN for a single reading.
    count : ndarray of int64, shape (n_measured,)
        Number of readings of each code.
    source : str
        Where the readings came from (file name or label).
    code_bits : int
        Width the file itself implies (widest binary string), 0 when it says nothing.
    """

    codes: np.ndarray
    volts: np.ndarray
    spread: np.ndarray
    count: np.ndarray
    source: str = "measurement"
    code_bits: int = 0
    raw_codes: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64), repr=False)
    raw_volts: np.ndarray = field(default_factory=lambda: np.zeros(0), repr=False)

    @property
    def n_readings(self) -> int:
        """Number of readings before averaging."""
        return int(self.count.sum())

    @classmethod
    def from_readings(cls, codes, volts, source: str = "measurement", code_bits: int = 0
                      ) -> Measurement:
        """Group raw readings by code (vectorised): mean, sample spread and count per code.

        Parameters
        ----------
        codes : array_like of int, shape (n_readings,)
        volts : array_like of float, shape (n_readings,), volts
        """
        c = np.asarray(codes, dtype=np.int64).ravel()
        v = np.asarray(volts, dtype=float).ravel()
        if c.shape != v.shape:
            raise MeasurementError("codes and outputs differ in length", source=source)
        if c.size == 0:
            raise MeasurementError("no readings", source=source)
        if np.any(c < 0):
            raise MeasurementError("negative code", source=source)
        if not np.all(np.isfinite(v)):
            raise MeasurementError("an output is not a finite number", source=source)
        if np.any(np.abs(v) > MAX_ABS_VOLTS):
            raise MeasurementError(f"an output is beyond ±{MAX_ABS_VOLTS:g} V", source=source)
        uniq, inv, count = np.unique(c, return_inverse=True, return_counts=True)
        mean = np.bincount(inv, weights=v) / count
        dev2 = np.bincount(inv, weights=(v - mean[inv]) ** 2)
        with np.errstate(invalid="ignore", divide="ignore"):
            spread = np.where(count > 1, np.sqrt(dev2 / np.maximum(count - 1, 1)), np.nan)
        return cls(codes=uniq, volts=mean, spread=spread, count=count.astype(np.int64),
                   source=source, code_bits=code_bits, raw_codes=c, raw_volts=v)


# ------------------------------------------------------------------------------------------------
# parsing

_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_VALUE = re.compile(rf"^({_NUMBER})\s*(V|v|mV|mv|uV|uv|µV|μV)?$")
_HEX_PREFIX = re.compile(r"^0[xX]([0-9a-fA-F_]+)$")
_HEX_SUFFIX = re.compile(r"^([0-9][0-9a-fA-F_]*)[hH]$")
_BIN_PREFIX = re.compile(r"^0[bB]([01_]+)$")
_DEC = re.compile(r"^[+]?[0-9_]+$")
_HEADER_UNIT = re.compile(r"(?:^|[\s(\[_/-])(mV|mv|uV|uv|µV|μV|V|v)(?:$|[\s)\]_/-])")


@dataclass(frozen=True)
class _Columns:
    code: int
    value: int
    code_base: int  # 10, 16 or 2 for plain digits
    unit: float     # volts per unit of a bare number
    width: int      # number of fields a data line must have at least


def _unit_scale(text: str) -> float:
    key = {"v": "V", "mv": "mV", "uv": "uV"}.get(text, text)
    return UNIT_SCALE[key]


def _split(line: str, sep: str | None) -> list[str]:
    if sep is None:
        return line.split()
    return [f.strip() for f in line.split(sep)]


def _choose_sep(line: str) -> str | None:
    for sep in (";", ",", "\t"):
        if sep in line:
            return sep
    return None


def parse_code(text: str, base: int = 10) -> tuple[int, int]:
    """One code field → (code, binary width or 0); raises ``ValueError`` if unreadable."""
    s = text.strip()
    m = _HEX_PREFIX.match(s) or _HEX_SUFFIX.match(s)
    if m:
        return int(m.group(1).replace("_", ""), 16), 0
    m = _BIN_PREFIX.match(s)
    if m:
        digits = m.group(1).replace("_", "")
        return int(digits, 2), len(digits)
    if base == 2 and re.fullmatch(r"[01_]+", s):
        digits = s.replace("_", "")
        return int(digits, 2), len(digits)
    if base == 16 and re.fullmatch(r"[0-9a-fA-F_]+", s):
        return int(s.replace("_", ""), 16), 0
    if _DEC.match(s) and s.strip("+_"):
        return int(s.replace("_", "").lstrip("+")), 0
    raise ValueError(f"unreadable code {s!r}")


def _parse_value(text: str, unit: float, decimal_comma: bool) -> float:
    s = text.strip()
    if decimal_comma and s.count(",") == 1 and "." not in s:
        s = s.replace(",", ".")
    m = _VALUE.match(s)
    if not m:
        raise ValueError(s)
    scale = unit if m.group(2) is None else _unit_scale(m.group(2))
    x = float(m.group(1)) * scale
    if not math.isfinite(x) or abs(x) > MAX_ABS_VOLTS:
        raise ValueError(s)
    return x


def _header_columns(fields: list[str]) -> _Columns:
    low = [f.lower() for f in fields]
    code = next((i for i, f in enumerate(low) if f.startswith("code")), 0)
    others = [i for i in range(len(fields)) if i != code]
    value = next((i for i in others if any(w in low[i] for w in ("v", "out", "level"))),
                 others[0])
    base = 2 if "bin" in low[code] else 16 if "hex" in low[code] else 10
    m = _HEADER_UNIT.search(fields[value])
    unit = _unit_scale(m.group(1)) if m else 1.0
    return _Columns(code, value, base, unit, max(code, value) + 1)


def _decode(data: bytes, source: str) -> str:
    if b"\x00" in data:
        raise MeasurementError("this is a binary file, not text readings", source=source)
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        return data.decode("latin-1")


def parse_text(text: str, source: str = "measurement") -> Measurement:
    """Read measurement text (see the module docstring for the accepted layout).

    Parameters
    ----------
    text : str
        The whole file.
    source : str
        Name used in messages.

    Returns
    -------
    Measurement

    Raises
    ------
    MeasurementError
        Naming the line (1-based) that cannot be read, or the limit that is exceeded.
    """
    if len(text) > MAX_FILE_BYTES:
        raise MeasurementError(f"more than {MAX_FILE_BYTES // (1024 * 1024)} MB of text; split the "
                               "file or keep fewer repeats", source=source)
    sep: str | None = None
    cols: _Columns | None = None
    codes: list[int] = []
    volts: list[float] = []
    width_bits = 0
    first = True
    for number, raw in enumerate(text.splitlines(), start=1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        if first:
            sep = _choose_sep(line)
        fields = _split(line, sep)
        if first:
            first = False
            try:
                parse_code(fields[0])
            except ValueError:
                if len(fields) < 2:
                    raise MeasurementError(f"expected a header with a code and an output column "
                                           f"or a reading 'code, output'; got {line[:60]!r}",
                                           number, source) from None
                cols = _header_columns(fields)
                continue
        if cols is None:
            if sep is None and len(fields) == 3 and fields[2] in ("V", "mV", "uV", "µV", "μV"):
                fields = [fields[0], fields[1] + fields[2]]
            if len(fields) != 2:
                raise MeasurementError(f"expected two fields 'code, output', found {len(fields)}; "
                                       "add a header naming the columns to use", number, source)
            c_i, v_i, base, unit = 0, 1, 10, 1.0
        else:
            if sep is None and len(fields) == cols.width + 1 and fields[-1] in UNIT_SCALE:
                fields = [*fields[:-2], fields[-2] + fields[-1]]
            if len(fields) < cols.width:
                raise MeasurementError(f"expected at least {cols.width} fields as in the header, "
                                       f"found {len(fields)}", number, source)
            c_i, v_i, base, unit = cols.code, cols.value, cols.code_base, cols.unit
        try:
            code, width = parse_code(fields[c_i], base)
        except ValueError:
            raise MeasurementError(f"cannot read the code {fields[c_i][:40]!r} (decimal 37, hex "
                                   "0x25 or 25h, binary 0b100101)", number, source) from None
        if code >= 1 << MAX_CODE_BITS or width > MAX_CODE_BITS:
            raise MeasurementError(f"code {fields[c_i][:40]} is wider than {MAX_CODE_BITS} bits",
                                   number, source)
        try:
            value = _parse_value(fields[v_i], unit, sep in (";", "\t"))
        except ValueError:
            raise MeasurementError(f"cannot read the output {fields[v_i][:40]!r} as a finite "
                                   f"number (within ±{MAX_ABS_VOLTS:g} V) with an optional unit "
                                   "V, mV, uV or µV", number, source) from None
        codes.append(code)
        volts.append(value)
        width_bits = max(width_bits, width)
        if len(codes) > MAX_READINGS:
            raise MeasurementError(f"more than {MAX_READINGS} readings; the program reads at most "
                                   "that many", number, source)
    if not codes:
        raise MeasurementError("no readings found (expected lines 'code, output')", source=source)
    return Measurement.from_readings(codes, volts, source=source, code_bits=width_bits)


def read_measurement(path: str | Path) -> Measurement:
    """Read a measurement file; see :func:`parse_text` for the layout and errors."""
    path = Path(path)
    try:
        data = read_at_most(path, MAX_FILE_BYTES)
    except FileNotFoundError:
        raise MeasurementError("the file does not exist", source=str(path)) from None
    except OSError as exc:
        raise MeasurementError(f"cannot read the file: {exc.strerror or exc}",
                               source=str(path)) from None
    if data is None:
        raise MeasurementError(f"the file holds more than {MAX_FILE_BYTES // (1024 * 1024)} MB; "
                               "the program reads at most that", source=str(path))
    return parse_text(_decode(data, str(path)), source=path.name)
