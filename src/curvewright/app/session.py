"""The open run in the app: the current immutable run, its file, undo history, autosave and the
background analysis. Widgets read from here and send every change through :meth:`RunSession.apply`.

Each change is a new :class:`~curvewright.core.run.Run` (with its audit entry, made by
:mod:`curvewright.io.run_edits`) pushed on a QUndoStack. Analysis runs on a worker thread: each
request carries a generation number and an answer for a run that is no longer current is dropped.
An analysis whose work took less than a frame last time is done at once on the GUI thread, with no
queued hop; a slower one starts on the worker thread as soon as the edit is made, and edits made
while it runs are analysed together once it answers (so a burst of edits costs at most one
analysis more than the last).

The model comparison (the model-evidence tab) is worked out on the analysis thread only while that
tab is shown (:attr:`RunSession.evidence_wanted`) or an analyte keeps the default calibration function
nobody chose (the window then says what the comparison recommends); otherwise it is worked out when it is first read,
from the same result, so an edit that the evidence tab does not show never waits for it.
"""

from __future__ import annotations

import hashlib
import time
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, replace
from pathlib import Path

from PySide6.QtCore import QCoreApplication, QObject, QRunnable, QStandardPaths, QThreadPool, QTimer, Signal, Slot
from PySide6.QtGui import QUndoCommand, QUndoStack

from ..core.errors import CurvewrightError
from ..core.run import Run, Signature
from ..io.analyte_trail import rename_of
from ..io.audit import Identity, append_entry, identity_from
from ..io.integrity import content_sha256
from ..io.run_document import document_unchanged, open_recovery, open_run, save_recovery, save_run
from ..io.signatures import WITHDRAWN

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.comparison import ModelComparison
    from ..core.run_analysis import RunResult

FRAME_SECONDS = 1 / 60
"""An analysis whose work took less than this (one frame at 60 Hz) is done at once on the GUI thread."""
DEFERRED_START_MS = 300
"""A session made with ``defer_analysis`` starts its first analysis at the latest this long after the
event loop runs, if no window has asked for it sooner."""
RECOVERY_DELAY_MS = 400
"""The recovery file is written this long after the last change (at most this much work is at risk)."""
ANSWER_WAIT_MS = 10000
"""A command that needs the results of the run as it is now (signing, the workbook, the record) waits
this long for the analysis under way; then it analyses the run itself, on the GUI thread
(:meth:`RunSession.current_result`)."""


class RunChange(QUndoCommand):
    """One change of the run. Undo brings the previous content back, but the audit trail only ever
    grows: undoing and redoing are themselves recorded, so no entry is ever taken away."""

    def __init__(self, session: "RunSession", before: Run, after: Run, text: str) -> None:
        super().__init__(text)
        self.session, self.before, self.after = session, before, after
        self._done_once = False

    def redo(self) -> None:
        if not self._done_once:
            self._done_once = True
            self.session._set_run(self.after)
            return
        self.session._set_run(self._with_trail(self.after, "change_redone"), acted_on=self.analyte(undoing=False))

    def undo(self) -> None:
        self.session._set_run(self._with_trail(self.before, "change_undone"), acted_on=self.analyte(undoing=True))

    def analyte(self, *, undoing: bool) -> str | None:
        """The analyte this change acts on, by its name once undone (``undoing``) or done again: the one
        its audit entries name (a rename: the name it goes back to, or on to), else the one whose content
        it changes; None when it changes no analyte's (samples, settings)."""
        shown = self.before if undoing else self.after
        names = {a.name for a in shown.analytes}
        for x in reversed(undone_entries(self.before, self.after)):
            renamed = rename_of(x["action"], x["details"])
            name = (renamed[0] if undoing else renamed[1]) if renamed else x["details"].get("analyte")
            if name in names:
                return name
        if len(self.before.analytes) == len(self.after.analytes):
            for old, new in zip(self.before.analytes, self.after.analytes):
                if old is not new:
                    return (old if undoing else new).name
        return None

    def _with_trail(self, content: Run, action: str) -> Run:
        details = {"change": self.text(), "entries": undone_entries(self.before, self.after)}
        trail = append_entry(self.session.run.audit, action, details, user=self.session.identity,
                             content_sha256=content_sha256(content))
        return replace(content, audit=trail)


def undone_entries(before: Run, after: Run) -> list[dict]:  # type: ignore[type-arg]
    """The audit entries a change wrote (those ``after`` holds beyond ``before``'s trail), as an undo or
    redo entry names them: each one's action, details and hash. The trail then says what an undo
    restored and a redo made again, in the words of the entries themselves
    (:func:`curvewright.io.audit_words.entry_words`), and which entries they were."""
    n = len(before.audit)
    follows = len(after.audit) >= n and (n == 0 or after.audit[n - 1].hash == before.audit[-1].hash)
    written = after.audit[n:] if follows else ()
    return [{"action": e.action, "details": dict(e.details), "hash": e.hash} for e in written]


@dataclass(frozen=True)
class AnalysisAnswer:
    generation: int
    result: RunResult | None
    error: str | None
    seconds: float
    evidence: Mapping[str, ModelComparison | str] | None = None
    work_seconds: float | None = None
    """The analysing thread's own CPU time. On the worker thread the elapsed time also counts the
    waits for Python's interpreter lock while the GUI thread draws, which an analysis done on the
    GUI thread would not wait for; the choice of thread is made on this (``seconds`` when None)."""


class RunEvidence(Mapping):
    """Per analyte, the run's one model comparison (:attr:`RunResult.evidence`), worked out when it is
    first read (or by :meth:`load`, on the analysis thread) and kept with its result."""

    def __init__(self, result: RunResult) -> None:
        self.result = result

    def load(self) -> "RunEvidence":
        self.result.evidence  # noqa: B018 - a cached property: worked out once, here
        return self

    @property
    def loaded(self) -> bool:
        return "evidence" in vars(self.result)

    def __getitem__(self, name: str) -> ModelComparison | str:
        return self.result.evidence[name]

    def __iter__(self) -> Iterator[str]:
        return iter(self.result.evidence)

    def __len__(self) -> int:
        return len(self.result.evidence)


def analyse_with_evidence(run: Run) -> tuple[RunResult, RunEvidence]:
    """The run's results and, per analyte, its model comparison (the run's one evidence), which is
    worked out when first read (:class:`RunEvidence`). The engine, and scipy with it, is loaded here
    on the first call: on the analysis thread, while the window is being shown. The sample results
    stay the analysis's columns: the results table reads its rows from them as they are shown."""
    from ..core.run_analysis import analyse_run

    result = analyse_run(run)
    return result, RunEvidence(result)


def analysis_answer(run: Run, generation: int, with_evidence: bool) -> AnalysisAnswer:
    """Analyse ``run`` (and work out its model comparison when ``with_evidence``), timed both as
    elapsed time and as the calling thread's CPU time (:attr:`AnalysisAnswer.work_seconds`)."""
    start, work_start = time.perf_counter(), time.thread_time()
    try:
        result, evidence = analyse_with_evidence(run)
        if with_evidence:
            evidence.load()
        return AnalysisAnswer(generation, result, None, time.perf_counter() - start, evidence,
                              time.thread_time() - work_start)
    except Exception as exc:  # noqa: BLE001 - shown to the user in the status line
        return AnalysisAnswer(generation, None, str(exc), time.perf_counter() - start, None,
                              time.thread_time() - work_start)


class _AnalysisSignals(QObject):
    done = Signal(object)


class _AnalysisJob(QRunnable):
    def __init__(self, run: Run, generation: int, signals: _AnalysisSignals, with_evidence: bool = True) -> None:
        super().__init__()
        self.subject, self.generation, self.signals = run, generation, signals
        self.with_evidence = with_evidence
        self.setAutoDelete(True)

    def run(self) -> None:  # noqa: D401 - QRunnable entry point
        self.signals.done.emit(analysis_answer(self.subject, self.generation, self.with_evidence))


class _RecoverySignals(QObject):
    written = Signal(int)       # the write's number
    failed = Signal(int, str)   # the write's number, and why it failed


class _RecoveryJob(QRunnable):
    """Writes the recovery file on the writer thread: the run and the path of its document in one
    file, written atomically. The outcome goes back to the session as a queued signal."""

    def __init__(self, run: Run, path: Path, source: str, signals: _RecoverySignals, number: int = 0) -> None:
        super().__init__()
        self.subject, self.path, self.source, self.signals = run, path, source, signals
        self.number = number
        self.setAutoDelete(True)

    def run(self) -> None:  # noqa: D401 - QRunnable entry point
        try:
            try:
                self.path.parent.mkdir(parents=True, exist_ok=True)
            except OSError as exc:
                raise CurvewrightError(f"cannot make the folder {self.path.parent} ({exc.strerror or exc})") from None
            save_recovery(self.subject, self.path, self.source)
        except (OSError, CurvewrightError) as exc:
            self.signals.failed.emit(self.number, str(exc))
            return
        self.signals.written.emit(self.number)


class RunSession(QObject):
    """The run being worked on."""

    run_changed = Signal(object)        # Run
    analysis_ready = Signal(object)     # RunResult
    analysis_failed = Signal(str)
    dirty_changed = Signal(bool)
    path_changed = Signal(object)       # Path | None
    recovery_failed = Signal(str)       # what cannot be kept for recovery, and why (once until it works again)

    def __init__(self, run: Run, path: Path | None = None, *, recovery_folder: Path | None = None,
                 parent: QObject | None = None, disk_sha256: str | None = None,
                 identity: Identity | None = None, defer_analysis: bool = False) -> None:
        super().__init__(parent)
        self._run = run
        self._path = path
        self.disk_sha256 = disk_sha256
        self.identity = identity or identity_from()
        """Who is working: full name and ID from the settings, recorded in every audit entry."""
        """SHA-256 of the file as this session last read or wrote it: a save refuses to overwrite a
        file someone else has changed since (see :meth:`changed_on_disk`)."""
        self._unsaved_records = False
        self.undo_stack = QUndoStack(self)
        self.undo_floor: str | None = None
        """Why the undo history goes back no further, once a signature, an approval or its withdrawal
        has emptied it in this session (:meth:`record_run`); None before."""
        self.acted_on: str | None = None
        """The analyte an undo or redo acts on, while its :attr:`run_changed` is handled; else None."""
        self.undo_stack.cleanChanged.connect(self._on_clean_changed)
        # after the stack has moved (its clean state is then current), keep the recovery file in step
        self.undo_stack.indexChanged.connect(self._on_index_changed)
        self.result: RunResult | None = None
        self.evidence: Mapping[str, ModelComparison | str] = {}
        self.evidence_wanted = False
        """True while the model evidence is shown: the analysis then works out the model comparison
        too (on the analysis thread); otherwise it is worked out when first read."""
        self.last_analysis_seconds = 0.0
        """How long the last analysis took (elapsed), as the status line shows it."""
        self.last_analysis_work_seconds = 0.0
        """The last analysis's own CPU time: below a frame, the next one is done on the GUI thread."""
        self._generation = 0
        self._answered = -1
        self._signals = _AnalysisSignals()
        self._signals.done.connect(self._on_answer)
        self._pool = QThreadPool(self)
        self._pool.setMaxThreadCount(1)
        self._running: int | None = None
        """Generation of the analysis under way on the worker thread, if any."""
        self.recovery_folder = recovery_folder or default_recovery_folder()
        # the recovery file is written shortly after the last change, off the GUI thread
        self._recovery_timer = QTimer(self)
        self._recovery_timer.setSingleShot(True)
        self._recovery_timer.setInterval(RECOVERY_DELAY_MS)
        self._recovery_timer.timeout.connect(self.write_recovery)
        self._writer = QThreadPool(self)
        self._writer.setMaxThreadCount(1)
        self._recovery_signals = _RecoverySignals()
        self._recovery_signals.failed.connect(self._on_recovery_failed)
        self._recovery_signals.written.connect(self._on_recovery_written)
        self._recovery_warned = False
        self._recovery_writing: int | None = None
        """The number of the recovery write under way on the writer thread, if any."""
        self._recovery_writes = 0
        self._recovery_again = False
        """A change came while a recovery write was under way: the latest run is written when it ends."""
        self._deferred_start = False
        if defer_analysis:
            # The window starts the first analysis once it has been painted (start_deferred_analysis),
            # so that loading the engine on the analysis thread does not slow the first paint. Should
            # no window ask for it, it starts shortly after the event loop runs.
            self._generation += 1
            self._deferred_start = True
            QTimer.singleShot(DEFERRED_START_MS, self, self.start_deferred_analysis)
        else:
            self.request_analysis(immediate=True)

    # --- state -----------------------------------------------------------------------------------
    @property
    def run(self) -> Run:
        return self._run

    @property
    def path(self) -> Path | None:
        return self._path

    @property
    def dirty(self) -> bool:
        return not self.undo_stack.isClean() or self._unsaved_records

    @Slot(int)
    def _on_index_changed(self, _index: int) -> None:
        self._recovery_timer.start()

    @Slot(bool)
    def _on_clean_changed(self, clean: bool) -> None:
        self.dirty_changed.emit(not clean or self._unsaved_records)

    def record(self, action: str, details: dict) -> None:  # type: ignore[type-arg]
        """Add an audit entry that is not a change of content (an export, a report): not undoable.

        The analysis does not read the audit trail, so a current result stays current: it is carried
        over to the run with the new entry instead of being computed again."""
        self.record_run(replace(self._run, audit=append_entry(self._run.audit, action, details, user=self.identity,
                                                              content_sha256=content_sha256(self._run))))

    def record_run(self, new_run: Run) -> None:
        """Make current a run that differs only in what it records (audit entries, signatures): not
        undoable. A signature, an approval or its withdrawal also empties the undo history: each covers
        the run as it is, so no change made before it can be undone or redone past it (that would drop
        the signature from the run while its audit entry stays, or bring back an approval without its
        signature). :attr:`undo_floor` then says why, in words for the analyst."""
        previous = self._run
        self._run = new_run
        if self.result is not None and self.result.run is previous:
            self.result = replace(self.result, run=self._run)
        if new_run.signatures != previous.signatures:
            self.undo_stack.clear()
            self.undo_floor = undo_floor_words(new_run.signatures[-1])
        elif new_run.approval is not None:
            self.undo_stack.clear()
        self._unsaved_records = True
        self.dirty_changed.emit(True)
        self.run_changed.emit(self._run)
        self._recovery_timer.start()

    def apply(self, new_run: Run, description: str) -> None:
        """Make ``new_run`` current as one undoable step."""
        if new_run is self._run:
            return
        self.undo_stack.push(RunChange(self, self._run, new_run, description))

    def undo(self) -> str | None:
        """Undo the last change, if there is one since the latest signature; else why not (the
        :attr:`undo_floor` words), or None when nothing was ever signed in this session."""
        if self.undo_stack.canUndo():
            self.undo_stack.undo()
            return None
        return self.undo_floor

    def redo(self) -> str | None:
        """Redo the last change undone since the latest signature, if any; else why not, as :meth:`undo`."""
        if self.undo_stack.canRedo():
            self.undo_stack.redo()
            return None
        return self.undo_floor

    def _set_run(self, run: Run, *, acted_on: str | None = None) -> None:
        """Make ``run`` current; an undo or redo names the analyte it acts on (:attr:`acted_on`, while
        :attr:`run_changed` is handled), so that the window shows it."""
        self._run = run
        self.acted_on = acted_on
        try:
            self.run_changed.emit(run)
        finally:
            self.acted_on = None
        self.request_analysis()

    # --- files -------------------------------------------------------------------------------------
    def changed_on_disk(self) -> bool:
        """True when the run's file no longer holds what this session read or wrote (another program,
        or a command recording an export in it, has written it since)."""
        return (self._path is not None and self.disk_sha256 is not None
                and not document_unchanged(self._path, self.disk_sha256))

    def save(self, path: Path | None = None, *, overwrite_changes: bool = False) -> Path:
        """Save to ``path`` (the run's own file when None). Saving over the run's own file refuses
        (:class:`~curvewright.io.run_document.DocumentChanged`) when it was changed on disk since it was
        opened, unless ``overwrite_changes``."""
        target = Path(path or self._path)  # type: ignore[arg-type]
        same_file = self._path is not None and target.resolve() == self._path.resolve()
        expected = self.disk_sha256 if same_file and not overwrite_changes else None
        self.disk_sha256 = save_run(self._run, target, expected_sha256=expected)
        previous_recovery = self.recovery_path()  # a new run's, or the old name's after Save As
        self._path = target
        self._unsaved_records = False
        self.undo_stack.setClean()
        self.dirty_changed.emit(False)
        self.path_changed.emit(target)
        self.discard_recovery()
        self._discard_recovery_files(previous_recovery)
        return target

    @classmethod
    def open(cls, path: Path, **kwargs) -> tuple["RunSession", tuple[str, ...]]:  # type: ignore[no-untyped-def]
        """The run in the document at ``path`` and what checking it found. Where its data were changed
        outside Curvewright, the trail gets an entry naming the change at once (not undoable, saved with
        the run), so that no later entry can make the change vanish from the trail."""
        from ..io.run_edits import note_outside_change

        opened = open_run(path)
        noted = note_outside_change(opened.run, user=kwargs.get("identity") or identity_from())
        session = cls(noted, Path(path), disk_sha256=opened.sha256, **kwargs)
        if noted is not opened.run:
            session._unsaved_records = True  # the entry is not yet in the file: saving keeps it
        return session, opened.integrity_problems

    # --- recovery ----------------------------------------------------------------------------------
    def recovery_path(self) -> Path:
        key = str(self._path.resolve()) if self._path else f"untitled-{id(self)}"
        digest = hashlib.sha256(key.encode("utf-8")).hexdigest()[:16]
        return self.recovery_folder / f"recovery-{digest}.json"

    def write_recovery(self) -> None:
        """Autosave after a change (on the writer thread), so that a crash loses nothing. One write at
        a time: changes made while one is under way are written together, the latest run once, as
        soon as it ends (the writes of a burst of edits are not queued one behind another). When the
        recovery file cannot be written, :attr:`recovery_failed` says so once (again only after a
        write has worked in between)."""
        if not self.dirty:
            self.discard_recovery()
            return
        if self._recovery_writing is not None:
            self._recovery_again = True
            return
        self._recovery_again = False
        self._recovery_writes += 1
        self._recovery_writing = self._recovery_writes
        self._writer.start(_RecoveryJob(self._run, self.recovery_path(), str(self._path or ""), self._recovery_signals,
                                        self._recovery_writes))

    def _recovery_write_ended(self, number: int) -> None:
        if number != self._recovery_writing:
            return  # a write already waited for (flush_recovery)
        self._recovery_writing = None
        if self._recovery_again:
            self.write_recovery()

    @Slot(int, str)
    def _on_recovery_failed(self, number: int, reason: str) -> None:
        self._recovery_write_ended(number)
        if self._recovery_warned:
            return
        self._recovery_warned = True
        self.recovery_failed.emit(
            f"Unsaved changes cannot be kept for recovery after a crash: {reason}. Save the run to keep "
            "your changes; the recovery folder is set by the system's application-data location."
        )

    @Slot(int)
    def _on_recovery_written(self, number: int) -> None:
        self._recovery_warned = False
        self._recovery_write_ended(number)

    def flush_recovery(self) -> None:
        """Write a pending recovery file now and wait for it (before a risky step, and in tests)."""
        pending = self._recovery_timer.isActive() or self._recovery_again
        self._recovery_timer.stop()
        self._writer.waitForDone(10000)
        self._recovery_writing = None  # waited for: its queued answer is passed over
        if pending:
            self.write_recovery()
            self._writer.waitForDone(10000)
            self._recovery_writing = None

    def discard_recovery(self) -> None:
        self._recovery_timer.stop()
        self._recovery_again = False
        self._writer.waitForDone(10000)
        self._recovery_writing = None
        self._discard_recovery_files(self.recovery_path())

    @staticmethod
    def _discard_recovery_files(recovery: Path) -> None:
        for p in recovery_files(recovery):
            try:
                p.unlink(missing_ok=True)
            except OSError:
                pass  # a file we cannot remove is offered again at the next start, never lost

    # --- analysis ----------------------------------------------------------------------------------
    def request_analysis(self, immediate: bool = False) -> None:
        """Analyse the current run: at once on the GUI thread when the last analysis's work took less
        than a frame (:attr:`last_analysis_work_seconds`), else on the worker thread (right away, or
        when the analysis under way answers).
        ``immediate`` always uses the worker thread (the first analysis of a session)."""
        self._generation += 1
        self._deferred_start = False
        if self._running is not None:
            return  # analysed when the analysis under way answers (see _on_answer)
        if not immediate and self.result is not None and self.last_analysis_work_seconds < FRAME_SECONDS:
            self._analyse_here()
        else:
            self._start_analysis()

    @Slot()
    def start_deferred_analysis(self) -> None:
        """Start the first analysis of a session made with ``defer_analysis`` (once; no-op after)."""
        if self._deferred_start:
            self._deferred_start = False
            self._start_analysis()

    @Slot()
    def _start_analysis(self) -> None:
        self._running = self._generation
        self._pool.start(_AnalysisJob(self._run, self._generation, self._signals, self._evidence_needed()))

    def _analyse_here(self) -> None:
        """The analysis on the GUI thread, for runs that take less than a frame."""
        self._on_answer(analysis_answer(self._run, self._generation, self._evidence_needed()))

    def _evidence_needed(self) -> bool:
        """Whether the analysis works out the model comparison too: while the model evidence is shown,
        and while an analyte keeps the default calibration function nobody chose (the window then says
        what the comparison recommends)."""
        from ..io.model_choice import any_not_chosen

        return self.evidence_wanted or any_not_chosen(self._run)

    @property
    def analysis_pending(self) -> bool:
        """True while the latest change has not been analysed yet."""
        return self._answered != self._generation

    def current_result(self) -> RunResult | None:
        """The results of the run as it is now, made the shown ones before they are returned (None when
        the analysis fails; :attr:`analysis_failed` says why). The analysis under way is waited for
        (:data:`ANSWER_WAIT_MS`); when it has not answered by then, the run is analysed here, on the GUI
        thread, and that answer is shown at once: the late answer of the same run is then passed over.
        A command that signs or writes results reads them from here, so that what it records is what
        the window shows."""
        if not (self.result is not None and self.result.run is self._run):
            self.wait_for_analysis(ANSWER_WAIT_MS)
            QCoreApplication.processEvents()  # the answer, queued by the analysis thread
        if self.result is not None and self.result.run is self._run:
            return self.result
        answer = analysis_answer(self._run, self._generation, self._evidence_needed())
        running = self._running
        self._on_answer(answer)
        self._running = running  # the analysis thread is still under way: its answer comes, and is passed over
        return self.result if answer.result is not None else None

    @Slot(object)
    def _on_answer(self, answer: AnalysisAnswer) -> None:
        if self._running == answer.generation:
            self._running = None
        if answer.generation != self._generation:
            # a newer edit came while this was analysed: analyse the newest run now
            if self._running is None and self._answered != self._generation:
                self._start_analysis()
            return
        if answer.generation == self._answered:
            return  # answered already (analysed on the GUI thread while this one ran: current_result)
        self._answered = answer.generation
        self.last_analysis_seconds = answer.seconds
        self.last_analysis_work_seconds = answer.seconds if answer.work_seconds is None else answer.work_seconds
        if answer.result is None:
            self.analysis_failed.emit(answer.error or "analysis failed")
            return
        result = answer.result
        if result.run is not self._run:
            # the same content: only what the run records (a signature, an export's entry) changed
            # since this was asked for (record_run does not start an analysis), so it is the current run's
            result = replace(result, run=self._run)
        self.result = result
        self.evidence = answer.evidence if answer.evidence is not None else {}  # not worked out here
        self.analysis_ready.emit(answer.result)

    def wait_for_analysis(self, timeout_ms: int = 10000) -> bool:
        """Block until the latest run has been analysed (for scripts and benchmarks); answers arrive
        as queued signals, so the caller still has to let the event loop run once."""
        self.start_deferred_analysis()
        if not self._pool.waitForDone(timeout_ms):
            return False
        if self.analysis_pending and self._running != self._generation:
            # the analysis that ran was of an earlier run (its answer is still queued): run the latest
            self._start_analysis()
            return self._pool.waitForDone(timeout_ms)
        return True


def undo_floor_words(signature: Signature) -> str:
    """Why no change made before ``signature`` (a signature, an approval or a withdrawn approval) is
    undone or redone, and how the signed run is changed instead: one line of the status bar."""
    by = f"by {signature.name} ({signature.time_utc.replace('T', ' ')[:19]} UTC)"
    if signature.role == WITHDRAWN:
        return f"Not undone: the withdrawal of the approval {by} stays on record; to approve again, sign as approver."
    if signature.role == "approver":
        return (f"Not undone: the approval {by} locks the run; to change it, use Review → Withdraw approval… "
                "with a reason.")
    return f"Not undone: the {signature.role} signature {by} covers the run as signed; change it by a new edit, with its reason."


def default_recovery_folder() -> Path:
    base = QStandardPaths.writableLocation(QStandardPaths.StandardLocation.AppDataLocation)
    return Path(base or Path.home() / ".curvewright") / "recovery"


def recovery_files(recovery: Path) -> tuple[Path, ...]:
    """A recovery file and its companions: its backup, and the ``.source`` file earlier versions
    wrote beside it."""
    return (recovery, recovery.with_suffix(".source"), recovery.with_name(recovery.name + ".bak"))


def pending_recoveries(folder: Path | None = None) -> list[tuple[Path, str]]:
    """Recovery files left by a session that did not close normally: (file, original path or "").
    The path is read from inside the file (from a ``.source`` file beside it for files written by
    earlier versions); a file that cannot be read is listed with ""."""
    folder = folder or default_recovery_folder()
    if not folder.exists():
        return []
    out = []
    for p in sorted(folder.glob("recovery-*.json")):
        try:
            _, source = open_recovery(p)
        except CurvewrightError:
            source = ""
        out.append((p, source))
    return out
