"""Jobs of ``neve serve``: one site's result, one portfolio run; each in its own folder.

A job has an unguessable id (:func:`secrets.token_urlsafe`) and a folder of
random name under the work folder; nothing lists jobs, so a job is reached
only by whoever holds its id.  A job's downloads are the files it made,
by name (:meth:`Job.file`): a name not in that list, a path, ``..`` or a
symbolic link is never served.  The oldest jobs (and their folders) go when
more than :data:`MAX_JOBS` are kept.
"""

from __future__ import annotations

import secrets
import shutil
import tempfile
import threading
import time
from collections import OrderedDict
from dataclasses import dataclass, field
from pathlib import Path

from neve.engine.errors import InputError, NeveError

#: jobs kept at once (the oldest and its folder are removed beyond it)
MAX_JOBS = 500

#: the stages of a portfolio run, in order (``GET /api/jobs/{id}``: ``stage``, ``progress``)
SCREEN_STAGES = ("queued", "screening", "writing results", "writing the map", "done")

#: the result formats of a portfolio run, as download names
RESULT_FILES = ("results.csv", "results.xlsx", "results.gpkg", "results.parquet")


class JobNotFound(InputError):
    """No job of that id (answered 404, the same whether it never existed or is gone)."""


@dataclass
class Job:
    id: str
    kind: str  # "site" | "screen"
    folder: Path
    status: str = "queued"  # queued | running | done | error
    stage: str = "queued"
    message: str = ""
    files: dict[str, Path] = field(default_factory=dict)
    data: dict | None = None  # a site job: the neve site JSON; a screen job: the summary
    result: object = None  # a site job: the SiteResult (its views make the package)
    request: dict = field(default_factory=dict)
    diagrams: dict = field(default_factory=dict)  # a site job: case name -> its diagram (PNG)
    created: float = field(default_factory=time.time)
    lock: threading.Lock = field(default_factory=threading.Lock)

    def add(self, name: str, path: Path) -> None:
        """Record a file this job made (only these are ever served)."""
        self.files[name] = path

    def file(self, name: str) -> Path:
        """The file ``name`` this job made; anything else is :class:`JobNotFound`."""
        path = self.files.get(name)
        if path is None:
            raise JobNotFound("file", f"this job made no file {name!r}", ", ".join(self.files))
        folder = self.folder.resolve()
        if path.is_symlink() or not path.is_file() or folder not in path.resolve().parents:
            raise JobNotFound("file", f"{name!r} is not there", "a file this job made")
        return path

    def progress(self) -> float:
        if self.kind != "screen" or self.stage not in SCREEN_STAGES:
            return 1.0 if self.status == "done" else 0.0
        return SCREEN_STAGES.index(self.stage) / (len(SCREEN_STAGES) - 1)


class JobStore:
    """The jobs of one server (in memory; their files under ``work``)."""

    def __init__(self, work: Path, max_jobs: int = MAX_JOBS):
        self.work = work
        self.max_jobs = max_jobs
        self._jobs: OrderedDict[str, Job] = OrderedDict()
        self._lock = threading.Lock()

    def new(self, kind: str, request: dict | None = None) -> Job:
        folder = Path(tempfile.mkdtemp(prefix="job-", dir=self.work))
        job = Job(id=secrets.token_urlsafe(18), kind=kind, folder=folder, request=request or {})
        with self._lock:
            self._jobs[job.id] = job
            while len(self._jobs) > self.max_jobs:
                _, old = self._jobs.popitem(last=False)
                shutil.rmtree(old.folder, ignore_errors=True)
        return job

    def get(self, job_id: str) -> Job:
        with self._lock:
            job = self._jobs.get(job_id)
        if job is None:
            raise JobNotFound(
                "job", "no such job (or it has been removed)", "the id a job answered"
            )
        return job

    def drop(self, job: Job) -> None:
        with self._lock:
            self._jobs.pop(job.id, None)
        shutil.rmtree(job.folder, ignore_errors=True)


def fail(job: Job, exc: BaseException) -> None:
    """Mark a job failed with a message for people (a NeveError's, never a traceback)."""
    job.status = "error"
    job.message = (
        str(exc)
        if isinstance(exc, NeveError)
        else ("the run failed unexpectedly; the server's log has the details")
    )
