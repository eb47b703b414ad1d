"""Upgrades of older design-file layouts to the current one, one version step at a time.

Each step takes the parsed TOML of version *n* and returns the same content in the layout of
version *n + 1*; :func:`upgrade` chains them. The steps only move and rename keys: values are
checked afterwards by the current reader, so an old file with a bad value is refused with the same
message as a new one.

Layouts:

* **version 0** — the early single-design layout: one ``[design]`` table of design keys, with the
  Monte Carlo ``seed`` and ``trials`` (both optional) at the top level.
* **version 1** — ``[[candidate]]`` tables (one per compared candidate) and a free ``[settings]``
  table, where a ``seed``/``trials`` pair could be kept.
* **version 2** — adds ``[analysis]`` (``trials``, ``seed``) and ``[targets]`` (the limits
  the review judges against); ``seed``/``trials`` move from ``[settings]`` to ``[analysis]``.
* **version 3** (current) — a written file opens with ``sealed = true`` and closes with an
  ``[end]`` table (candidate count, checksum) so a copy cut short is refused; the content is the
  same as version 2 (see ``designfile.py``).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from .errors import DesignError

CURRENT_VERSION = 3
"""Schema version this program writes."""


def _from_0(data: dict[str, Any]) -> dict[str, Any]:
    design = data.pop("design", None)
    if not isinstance(design, dict):
        raise DesignError("design", "a version-0 file needs one [design] table of design keys")
    settings = {k: data.pop(k) for k in ("seed", "trials") if k in data}
    data["candidate"] = [design]
    if settings:
        data["settings"] = settings
    return data


def _from_1(data: dict[str, Any]) -> dict[str, Any]:
    settings = data.get("settings")
    if isinstance(settings, dict):
        analysis = {k: settings.pop(k) for k in ("trials", "seed") if k in settings}
        if analysis:
            data["analysis"] = analysis
        if not settings:
            data.pop("settings")
    return data


def _from_2(data: dict[str, Any]) -> dict[str, Any]:
    return data  # the content is unchanged; only written files gained the seal


UPGRADES: dict[int, Callable[[dict[str, Any]], dict[str, Any]]] = {0: _from_0, 1: _from_1,
                                                                     2: _from_2}
"""Version n → the function that turns a version-n document into version n + 1."""


def upgrade(data: dict[str, Any], version: int) -> dict[str, Any]:
    """Bring a parsed document of ``version`` up to :data:`CURRENT_VERSION` (modifies ``data``)."""
    while version < CURRENT_VERSION:
        data = UPGRADES[version](data)
        version += 1
    data["version"] = CURRENT_VERSION
    return data
