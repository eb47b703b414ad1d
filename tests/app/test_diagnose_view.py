"""The built-board view on its own: load, analyse off the GUI thread, suspects, candidate, exports."""

from __future__ import annotations

import importlib

import pytest

from rungwise.app.window.view_registry import VIEWS
from rungwise.core.demo import DEMO_BASE, demo_candidates
from rungwise.core.diagnose.synthetic import sensor_bias_example

pytest.importorskip("pytestqt")


@pytest.fixture
def pane(qtbot):
    from rungwise.app.views.diagnose import DiagnosePane

    view = DiagnosePane()
    qtbot.addWidget(view)
    yield view
    view.shutdown()
    assert view.runner.active_count() == 0


@pytest.fixture
def example(tmp_path):
    path = tmp_path / "board.csv"
    path.write_text(sensor_bias_example(), encoding="utf-8")
    return path


def test_registered_once_and_importable():
    entries = [e for e in VIEWS if e.key == "diagnose_pane"]
    assert len(entries) == 1
    cls = getattr(importlib.import_module(entries[0].module), entries[0].cls)
    assert cls.__name__ == "DiagnosePane"


def test_load_names_the_part_and_offers_the_as_built_candidate(pane, qtbot, example):
    pane.set_candidates(demo_candidates())
    assert not pane.button_use.isEnabled()
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=60000) as sig:
        assert pane.load_measurement(example)
    assert sig.args[0] is pane.diagnosis
    assert pane.table_suspects.item(0, 0).text() == "leg5"
    assert pane.table_suspects.item(0, 1).text().startswith("+1.8")
    assert "leg5" in pane.label_status.text()
    assert pane.table_findings.rowCount() > 5
    assert pane.button_use.isEnabled()
    with qtbot.waitSignal(pane.candidate_requested, timeout=60000) as asked:
        pane.button_use.click()
    built = asked.args[0]
    assert built.topology == DEMO_BASE.topology
    assert "leg5" in built.parts


def test_choosing_another_candidate_reanalyses(pane, qtbot, example):
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=60000):
        pane.load_measurement(example)
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=60000) as sig:
        pane.combo_design.setCurrentIndex(2)
    assert sig.args[0].design.topology == "segmented"


def test_exports_write_the_correction_table(pane, qtbot, example, tmp_path):
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=60000):
        pane.load_measurement(example)
    pane.export_correction_csv(tmp_path / "c.csv")
    pane.export_correction_header(tmp_path / "fix.h")
    assert len((tmp_path / "c.csv").read_text().splitlines()) == 257
    assert "static const uint8_t fix[FIX_LEN]" in (tmp_path / "fix.h").read_text()


def test_unreadable_file_is_explained_not_raised(pane, tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("0,0\n1,oops\n")
    assert not pane.load_measurement(bad)
    assert "bad.csv, line 2" in pane.label_status.text()
    assert pane.diagnosis is None


def test_refused_analysis_is_shown(pane, qtbot, example):
    pane.set_candidates([DEMO_BASE.replace(bits=4)])
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=60000) as sig:
        pane.load_measurement(example)
    assert sig.args[0] is None
    assert "beyond the 4-bit design" in pane.label_status.text()
    assert not pane.button_csv.isEnabled()


def test_a_hidden_view_waits_until_shown(pane, qtbot, example):
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=60000):
        pane.load_measurement(example)
    first = pane.diagnosis
    pane.set_candidates([demo_candidates()[1], DEMO_BASE])
    assert not pane.runner.is_busy("diagnose")
    assert pane.diagnosis is first
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=60000) as sig:
        pane.show()
    assert sig.args[0] is not first
    # the chosen built design is kept by name although it moved in the list
    assert pane.combo_design.currentIndex() == 1
    assert sig.args[0].design.topology == "r2r-voltage"


def test_a_refused_file_is_not_replaced_by_the_running_analysis(pane, qtbot, example, tmp_path):
    # found by the soak run: the analysis running when a damaged file was refused finished after
    # it and replaced "Cannot use this file" with the earlier file's explanation
    from PySide6.QtCore import QCoreApplication

    pane.set_candidates(demo_candidates())
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=60000):
        pane.load_measurement(example)
    pane.combo_design.setCurrentIndex(1)  # starts another analysis
    assert pane.runner.is_busy("diagnose")
    damaged = tmp_path / "damaged.csv"
    damaged.write_text("code, output\n0, 0.0\n1, x\n", encoding="utf-8")
    assert not pane.load_measurement(damaged)
    refusal = pane.label_status.text()
    assert refusal.startswith("Cannot use this file: ")
    qtbot.waitUntil(lambda: pane.runner.active_count() == 0, timeout=60000)
    QCoreApplication.processEvents()  # anything the analysis queued is delivered now
    assert pane.label_status.text() == refusal


def test_the_example_board_is_offered(pane, qtbot):
    # the bundled file, loaded with one click; the built candidate becomes revision A (the
    # example's board) even when another candidate was chosen
    from rungwise.core.diagnose.synthetic import EXAMPLE_FILE_NAME

    pane.set_candidates(demo_candidates())
    pane.combo_design.setCurrentIndex(2)
    assert "example board" in pane.label_status.text()
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=60000) as sig:
        pane.findChild(type(pane.button_load), "button_load_example").click()
    assert pane.combo_design.currentIndex() == 0
    assert EXAMPLE_FILE_NAME in pane.label_source.text()
    assert sig.args[0].design == DEMO_BASE
    assert pane.table_suspects.item(0, 0).text() == "leg5"


def test_example_measurement_is_the_shipped_file():
    from rungwise.core.diagnose.reading import parse_text
    from rungwise.core.diagnose.synthetic import example_measurement, sensor_bias_example

    shipped, made = example_measurement(), parse_text(sensor_bias_example())
    assert shipped.source.endswith("example-measurement-sensor-bias.csv")
    assert (shipped.raw_codes.tolist(), shipped.raw_volts.tolist()) == (
        made.raw_codes.tolist(), made.raw_volts.tolist())


def test_repair_plan_is_shown_and_saved_with_the_as_built_design(pane, qtbot, example, tmp_path):
    from rungwise.core import designfile

    pane.set_candidates(demo_candidates())
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=30000):
        assert pane.load_measurement(example)
    text = pane.repair.text.toPlainText()
    assert "sets of parts explain the curve" in text or "set of parts explains" in text
    assert "rank" in text  # what the curve cannot tell apart, and why
    assert pane.diagnosis.repair is None
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=30000):
        pane.repair.check_repair.setChecked(True)  # analyses again with a plan
    plan = pane.diagnosis.repair
    assert plan is not None
    assert plan.target_inl == pytest.approx(0.25)
    text = pane.repair.text.toPlainText()
    assert "Repair plan" in text
    assert "predicted after" in text
    assert all(a.describe() in text for a in plan.actions)
    path = tmp_path / "built.toml"
    pane.repair.save(path)
    doc = designfile.load(path)
    assert doc.settings["repair"]["actions"] == [a.to_dict() for a in plan.actions]
    assert doc.candidates[1].parts
    rows = [pane.table_findings.item(r, 0).text() for r in range(pane.table_findings.rowCount())]
    assert "Bound" in rows


def test_extra_measurements_are_used_and_bad_ones_refused(pane, qtbot, tmp_path):
    import numpy as np

    from rungwise.core import Design
    from rungwise.core.diagnose.synthetic import format_readings, random_as_built, synthesize
    from rungwise.core.solve import solve
    from rungwise.core.topologies import build

    design = Design(bits=8, vref=2.5, name="plain ladder")
    pane.set_candidates([design])
    built = random_as_built(design, 0.0, seed=1, off={"leg7": 0.02})
    main, loaded = tmp_path / "main.csv", tmp_path / "loaded.csv"
    main.write_text(format_readings(synthesize(built, 2e-5, 2, repeats={0: 4, 255: 4})))
    loaded.write_text(format_readings(synthesize(built.replace(load_r=10e3), 2e-5, 3,
                                                 repeats={0: 4})))
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=30000):
        assert pane.load_measurement(main)
    assert pane.diagnosis.joint.ambiguous  # leg7 or series6: the curve alone cannot tell
    pane.repair.edit_load.setText("10k")
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=30000):
        assert pane.repair.set_loaded(loaded)
    assert not pane.diagnosis.joint.ambiguous
    assert pane.diagnosis.joint.extras == ["the curve with a 10000 Ω load"]
    assert "used the curve with a 10000 Ω load" in pane.repair.text.toPlainText()
    codes = np.array([0, 255])
    rout = solve(build(built), codes=codes).rout
    pane.repair.edit_rout.setText(f"0={rout[0]:.6g}, 255={rout[1]:.6g}")
    with qtbot.waitSignal(pane.diagnosis_changed, timeout=30000):
        pane.repair.edit_rout.editingFinished.emit()
    assert len(pane.diagnosis.joint.extras) == 2
    pane.repair.edit_rout.setText("128")
    pane.repair.edit_rout.editingFinished.emit()
    assert pane.label_status.text().startswith("Cannot use the extra measurements:")
    assert "CODE=OHMS" in pane.label_status.text()
