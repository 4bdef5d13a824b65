"""A signature given while the analysis of the last edit is still under way on the analysis thread.

The analysis thread is held on an event (released by the test, never timed): a standard's response is
typed three times too high (the run becomes NOT ACCEPTED), and Review → Sign as analyst is chosen while
that edit is still being analysed, as on a run whose analysis takes longer than the sign command waits
for it. The window must show the edited run's verdict before the dialog opens (the dialog's verdict is
the one shown), and after the signature the shown results, verdict and attention lines refer to the
signed run, also once the held analysis answers late."""

from __future__ import annotations

import shutil
import threading

from PySide6.QtWidgets import QApplication, QDialog

from curvewright.app import dialogs
from curvewright.app import session as session_module
from curvewright.app import standards_model as sm
from tests.app.conftest import DEMOS

NITRATE = next(p for p in DEMOS if p.name.startswith("nitrate"))


def test_a_signature_during_an_analysis_shows_the_signed_run(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    window = make_window(shutil.copy(NITRATE, tmp_path / "run.json"))
    session = window.session
    assert session.result.accepted and "ACCEPTED" in window.verdict.text()
    gui_thread = threading.get_ident()
    started, release = threading.Event(), threading.Event()
    worker_answers = []
    analysis_answer = session_module.analysis_answer

    def held(run, generation, with_evidence):  # type: ignore[no-untyped-def]
        if threading.get_ident() == gui_thread:
            return analysis_answer(run, generation, with_evidence)
        started.set()
        assert release.wait(60), "the test never released the analysis thread"
        answer = analysis_answer(run, generation, with_evidence)
        worker_answers.append(answer)
        return answer

    monkeypatch.setattr(session_module, "analysis_answer", held)
    # the sign command does not wait for the held analysis: the test would otherwise wait that long
    monkeypatch.setattr(session_module, "ANSWER_WAIT_MS", 0, raising=False)
    session.last_analysis_work_seconds = 1.0  # analysed on the analysis thread, as a large run is
    model = window.standards_model
    assert model.setData(model.index(3, sm.RESP), str(float(model.index(3, sm.RESP).data()) * 3))
    assert started.wait(30) and session.analysis_pending
    edited = session.run
    seen = []

    def answer(self) -> int:  # what the analyst sees with the dialog open
        seen.append((self.verdict.text(), window.verdict.text(), session.result.run is edited,
                     window.attention.text()))
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SignDialog, "exec", answer)
    window.actions_by_name["sign-analyst"].trigger()
    release.set()
    assert session._pool.waitForDone(60000)
    QApplication.processEvents()  # the held analysis's queued answer is delivered
    assert worker_answers and worker_answers[0].result is not None  # it did answer, late

    dialog_verdict, shown_verdict, current, attention = seen[0]
    assert dialog_verdict.startswith("Run verdict: NOT ACCEPTED")
    assert current and "Run NOT ACCEPTED" in shown_verdict  # the window showed what the dialog showed
    signed = session.run
    assert signed.signatures and signed.signatures[-1].role == "analyst" and signed is not edited
    assert session.result.run is signed and not session.analysis_pending
    assert not session.result.accepted and "Run NOT ACCEPTED" in window.verdict.text()
    assert window.attention.text() == " ".join(f"⚠ {line}" for line in window.attention_lines(session.result))
    assert window.results_model.rowCount() == len(session.result.analytes[0].samples)
    window.grab().save(str(tmp_path / "after-signature.png"))
    # the record is written from the shown result, without analysing again
    calls = []
    monkeypatch.setattr("curvewright.core.run_analysis.analyse_run", lambda *a, **k: calls.append(a))
    assert window._fresh_result() is session.result and not calls


def test_an_approval_withdrawn_while_the_opened_run_is_analysed_shows_the_withdrawn_run(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    """File → Open on an approved run, then Review → Withdraw approval… at once, while the opened
    run's first analysis is still held on the analysis thread: when it answers, the results, verdict
    and attention lines are those of the run as it now is (approval withdrawn)."""
    from PySide6.QtWidgets import QFileDialog

    from curvewright.io.audit import identity_from
    from curvewright.io.run_document import open_run, save_run
    from curvewright.io.signatures import sign

    approved = tmp_path / "approved.json"
    save_run(sign(open_run(NITRATE).run, "approver", identity_from("Tomas Reyes")), approved)
    window = make_window()
    gui_thread = threading.get_ident()
    started, release = threading.Event(), threading.Event()
    analysis_answer = session_module.analysis_answer

    def held(run, generation, with_evidence):  # type: ignore[no-untyped-def]
        if threading.get_ident() != gui_thread:
            started.set()
            assert release.wait(60), "the test never released the analysis thread"
        return analysis_answer(run, generation, with_evidence)

    monkeypatch.setattr(session_module, "analysis_answer", held)
    monkeypatch.setattr(QFileDialog, "getOpenFileName", lambda *a, **k: (str(approved), ""))
    window.actions_by_name["open"].trigger()
    session = window.session
    assert started.wait(30) and session.run.approval is not None and session.analysis_pending
    window.actions_by_name["withdraw-approval"].trigger()  # the reason dialog is answered
    withdrawn = session.run
    assert withdrawn.approval is None and withdrawn.signatures[-1].role == "approval withdrawn"
    release.set()
    assert session._pool.waitForDone(60000)
    QApplication.processEvents()  # the held analysis's queued answer is delivered
    assert session.result is not None and session.result.run is withdrawn
    assert "Run ACCEPTED" in window.verdict.text()
    assert not any(line.startswith("Approved by") for line in window.attention_lines(session.result))
    assert window.attention.text() == " ".join(f"⚠ {line}" for line in window.attention_lines(session.result))
