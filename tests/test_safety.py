"""Whole-program safety checks: no unsafe loading of user data, assets present and well formed."""

from __future__ import annotations

import configparser
import re
import xml.etree.ElementTree as ET
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
UNSAFE = re.compile(r"\b(pickle|marshal|shelve)\b|(?<![\w.])(eval|exec)\s*\(|yaml\.load\s*\(")


def test_no_pickle_eval_or_exec_in_program_code():
    hits = []
    for folder in ("core", "app"):
        for path in (ROOT / folder).rglob("*.py"):
            for n, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
                code = line.split("#", 1)[0]
                if UNSAFE.search(code) and ".exec()" not in code and "exec_(" not in code:
                    hits.append(f"{path.relative_to(ROOT)}:{n}: {line.strip()}")
    assert not hits, "unsafe loading constructs:\n" + "\n".join(hits)


def test_the_unsafe_pattern_catches_what_it_should():
    assert UNSAFE.search("data = pickle.loads(blob)")
    assert UNSAFE.search("x = eval(text)")
    assert not UNSAFE.search("app.exec()")
    assert not UNSAFE.search("evaluate(design)")


def test_desktop_entry_and_icon():
    entry = configparser.ConfigParser(interpolation=None)
    entry.optionxform = str
    entry.read(ROOT / "assets" / "rungwise.desktop", encoding="utf-8")
    section = entry["Desktop Entry"]
    assert section["Exec"].split()[0] == "rungwise"
    assert section["Icon"] == "rungwise"
    svg = ET.parse(ROOT / "assets" / "rungwise.svg").getroot()
    assert svg.tag.endswith("svg")
    assert svg.get("viewBox") == "0 0 256 256"
