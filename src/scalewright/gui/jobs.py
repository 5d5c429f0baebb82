"""Long work (reading, fitting, writing) off the interface thread, with progress and Cancel.

``JobRunner.run(title, func, on_done)`` calls ``func(progress, cancelled)`` in a worker
thread. ``progress(fraction)`` moves the bar in the window's status bar; ``cancelled()``
turns true once the user presses Cancel, and the io/tasks functions then raise
``errors.Cancelled`` and leave no partial file behind. The result or the error comes back
on the interface thread through Qt signals.
"""

from __future__ import annotations

import threading
from collections.abc import Callable
from typing import Any

from PySide6.QtCore import QObject, QRunnable, QThreadPool, QTimer, Signal
from PySide6.QtWidgets import QHBoxLayout, QLabel, QProgressBar, QPushButton, QWidget

from ..errors import Cancelled

Progress = Callable[[float], None]
CancelCheck = Callable[[], bool]


class _Relay(QObject):
    """Emitted from the worker thread; received by the runner on the interface thread."""

    progressed = Signal(float)  # 0..1
    ended = Signal()


class Job(QObject):
    """One piece of long work; its signals are emitted on the interface thread.

    ``outcome`` is "done", "failed" or "cancelled" once it has ended.
    """

    progressed = Signal(float)
    succeeded = Signal(object)
    failed = Signal(object)  # the exception
    was_cancelled = Signal()
    ended = Signal()  # after any of the three above

    def __init__(self, title: str, func: Callable[[Progress, CancelCheck], Any]) -> None:
        super().__init__()
        self.title = title
        self.func = func
        self._cancel = threading.Event()
        self.result: Any = None
        self.error: BaseException | None = None
        self.outcome: str | None = None
        self.done = False
        self.relay = _Relay()

    def cancel(self) -> None:
        self._cancel.set()

    def is_cancelled(self) -> bool:
        return self._cancel.is_set()

    def _progress(self, fraction: float) -> None:
        if self._cancel.is_set():
            raise Cancelled()
        self.relay.progressed.emit(float(fraction))


class _Runnable(QRunnable):
    def __init__(self, job: Job) -> None:
        super().__init__()
        self.job = job
        self.setAutoDelete(True)

    def run(self) -> None:
        job = self.job
        try:
            # A job that returns has finished its work, even if Cancel came too late.
            result = job.func(job._progress, job.is_cancelled)
        except Cancelled:
            job.outcome = "cancelled"
        except BaseException as err:  # shown to the user by the window, never swallowed
            job.error = err
            job.outcome = "failed"
        else:
            job.result = result
            job.outcome = "done"
        job.relay.ended.emit()


class JobRunner(QWidget):
    """The strip in the status bar: what is running, a progress bar and a Cancel button."""

    busy_changed = Signal(bool)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        self.job: Job | None = None
        layout = QHBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        self.label = QLabel()
        self.bar = QProgressBar()
        self.bar.setRange(0, 1000)
        self.bar.setTextVisible(False)
        self.bar.setMaximumWidth(180)
        self.bar.setToolTip("How far the current job has got")
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setToolTip("Stop the current job; no half-written file is left behind")
        self.cancel_button.clicked.connect(self.cancel)
        layout.addWidget(self.label)
        layout.addWidget(self.bar)
        layout.addWidget(self.cancel_button)
        self.setVisible(False)

    @property
    def busy(self) -> bool:
        return self.job is not None

    def run(
        self,
        title: str,
        func: Callable[[Progress, CancelCheck], Any],
        on_done: Callable[[Any], None] | None = None,
        on_error: Callable[[BaseException], None] | None = None,
        on_cancel: Callable[[], None] | None = None,
    ) -> Job:
        if self.job is not None:
            raise RuntimeError("another job is still running")
        job = Job(title, func)
        self.job = job
        self.label.setText(title)
        self.bar.setValue(0)
        self.bar.setRange(0, 0)  # busy until the first progress report
        self.cancel_button.setEnabled(True)
        self.setVisible(True)
        job.relay.progressed.connect(self._on_progress)
        job.relay.ended.connect(self._on_ended)
        if on_done is not None:
            job.succeeded.connect(on_done)
        if on_error is not None:
            job.failed.connect(on_error)
        if on_cancel is not None:
            job.was_cancelled.connect(on_cancel)
        self.busy_changed.emit(True)
        # Start on the next turn of the event loop, so the caller can connect first.
        QTimer.singleShot(0, lambda: self.pool.start(_Runnable(job)))
        return job

    def cancel(self) -> None:
        if self.job is not None:
            self.job.cancel()
            self.label.setText(f"{self.job.title}: stopping…")
            self.cancel_button.setEnabled(False)

    def _on_progress(self, fraction: float) -> None:
        if self.job is not None:
            self.job.progressed.emit(fraction)
        if self.bar.maximum() == 0:
            self.bar.setRange(0, 1000)
        self.bar.setValue(int(max(0.0, min(1.0, fraction)) * 1000))

    def _on_ended(self) -> None:
        job = self.job
        if job is None or job.outcome is None:
            return
        job.done = True
        self.job = None
        self.setVisible(False)
        self.busy_changed.emit(False)
        if job.outcome == "done":
            job.succeeded.emit(job.result)
        elif job.outcome == "failed":
            job.failed.emit(job.error)
        else:
            job.was_cancelled.emit()
        job.ended.emit()

    def wait(self, msecs: int = 30000) -> bool:
        """Block until the worker thread is idle (used when closing the window)."""
        return self.pool.waitForDone(msecs)


class _CallRelay(QObject):
    """Carries a finished call's result from the worker thread to the interface thread."""

    landed = Signal(object, object)  # deliver, result


class _Call(QRunnable):
    def __init__(self, work: Callable[[], Any], deliver: Callable[[Any], None], relay) -> None:
        super().__init__()
        self.work, self.deliver, self.relay = work, deliver, relay
        self.setAutoDelete(True)

    def run(self) -> None:
        # work() reports its own failures in its result (a fit's error text).
        self.relay.landed.emit(self.deliver, self.work())


class QuickCalls(QObject):
    """Short calls off the interface thread, with no progress bar and no Cancel.

    For work of tens of milliseconds that must not hold up a redraw (fitting Box-Cox to a
    million values): ``calls(work, deliver)`` runs ``work()`` in a worker thread and then
    ``deliver(result)`` on the interface thread. One worker, so calls land in order.
    """

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        self._relay = _CallRelay()  # no parent: kept alive by every call that uses it
        self._relay.landed.connect(self._land)
        self.running = 0

    def __call__(self, work: Callable[[], Any], deliver: Callable[[Any], None]) -> None:
        self.running += 1
        self.pool.start(_Call(work, deliver, self._relay))

    def _land(self, deliver: Callable[[Any], None], result: Any) -> None:
        self.running -= 1
        deliver(result)

    def wait(self, msecs: int = 30000) -> bool:
        """Block until every call has run (the results are delivered by the event loop)."""
        return self.pool.waitForDone(msecs)
