"""Many documents through check_document: serially, on a local process pool, or on a Dask cluster.

Every engine gives the same rows in input order, so that a screen or an audit is the same bytes whichever ran it.
"""

from __future__ import annotations

import gc
import os
import signal
import sys
import threading
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable, Iterator, Sequence

from ..core.config import Config
from ..core.errors import StudygapError, UsageError
from ..core.limits import DEFAULT_LIMITS, Limits, die_with_parent
from ..verdicts.report import Report

ENGINES = ("local", "dask")
SENDS = ("path", "bytes")
#: seconds a Dask run waits while its cluster has no worker or no scheduler before the unfinished documents
#: become error rows (Dask itself would wait for a worker forever)
DASK_LOST_AFTER = 60.0

#: how an error row from a lost cluster ends
LOST = "before this document was checked"

#: progress(done, total, path) after each document, in the order they finish
Progress = Callable[[int, int, str], None]


@dataclass(frozen=True)
class BatchResult:
    """One input document: its report, or the one-line reason it could not be checked."""

    path: str
    report: Report | None = None
    error: str = ""
    #: the error is studygap's own (a bug), with its traceback for --debug
    traceback: str = ""

    @property
    def ok(self) -> bool:
        return self.report is not None


class Terminated(KeyboardInterrupt):
    """SIGTERM, turned into an interruption so that a batch ends as after Ctrl-C: workers stopped, nothing written."""


@contextmanager
def stop_on_terminate() -> Iterator[None]:
    """Inside, SIGTERM raises Terminated (a KeyboardInterrupt) in the main thread instead of ending the process
    on the spot, so that the clean-up of an interrupted batch runs. An interruption (SIGTERM or Ctrl-C) that a
    finaliser swallowed is delivered again. Elsewhere (another thread, no SIGTERM, a SIGTERM that the caller
    ignores) it does nothing."""
    if (not hasattr(signal, "SIGTERM") or threading.current_thread() is not threading.main_thread()
            or signal.getsignal(signal.SIGTERM) is signal.SIG_IGN):
        yield
        return

    def terminated(signum, frame):  # noqa: ARG001
        raise Terminated

    previous_hook = sys.unraisablehook

    def swallowed(unraisable) -> None:
        # the signal came while a finaliser (__del__) ran, and Python ignores what a finaliser raises: send it
        # again from a short-lived thread, so that the main thread takes it at a later step, outside the
        # finaliser and this hook (should it land in one again, it comes back here)
        if isinstance(unraisable.exc_value, KeyboardInterrupt):
            again = signal.SIGTERM if isinstance(unraisable.exc_value, Terminated) else signal.SIGINT
            threading.Thread(target=_send_later, args=(again,), daemon=True).start()
            return
        previous_hook(unraisable)

    previous = signal.signal(signal.SIGTERM, terminated)
    sys.unraisablehook = swallowed
    try:
        yield
    finally:
        sys.unraisablehook = previous_hook
        signal.signal(signal.SIGTERM, previous)


def _send_later(signum: int) -> None:
    """Send this process a signal a moment from now (long enough for the caller to have returned)."""
    import time

    time.sleep(0.05)
    os.kill(os.getpid(), signum)


def _start_worker(checklist: str, parent: int) -> None:
    """A pool worker: Ctrl-C at a terminal reaches the whole process group, but only the parent decides (it
    ends the workers), so workers ignore SIGINT and print no tracebacks; SIGTERM ends a worker at once (a
    forked worker would otherwise inherit the parent's handler)."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    die_with_parent(parent)
    warm(checklist)


def warm(checklist: str = "auto") -> None:
    """Build this process's spaCy pipeline and compiled checklists once, before the first document arrives."""
    from ..matching.checklist import builtin_ids
    from ..engine import AUTO, check_text, compiled_for
    from ..core.limits import start_helper_threads
    from ..matching.nlp import pipeline

    start_helper_threads()  # Ctrl-C and the time limit must reach the main thread, not a library's helper
    pipeline()
    # a broken checklist is reported per document by check_one; warming must not kill the worker
    try:
        refs = builtin_ids() if checklist == AUTO else [checklist]
        for ref in refs:
            compiled_for(ref)
        # one tiny document builds what the first real one would otherwise build (rule patterns, caches)
        check_text("Two readers annotated 10 cases.", refs[0])
    except Exception:  # noqa: BLE001 - warming is an optimisation; check_one reports real problems per document
        pass


def check_one(path: str, checklist: str = "auto", config: Config | None = None, limits: Limits = DEFAULT_LIMITS,
              data: bytes | None = None, cache: bool = False) -> BatchResult:
    """The result for one document; never raises for a bad document (run in workers).

    With ``data`` the document's bytes come with the task (for workers that cannot see the file); the report
    names ``path`` exactly as if the file had been read there. With ``cache`` a file's report from an earlier
    run is reused while the file and the settings are unchanged (never for ``data``).
    """
    from ..engine import check_document

    try:
        return BatchResult(path, check_document(path, checklist, config, limits, cache=cache and data is None,
                                                data=data))
    except StudygapError as exc:
        return BatchResult(path, error=_one_line(str(exc), path))
    except OSError as exc:
        return BatchResult(path, error=f"{path}: cannot be read ({exc.strerror or exc})")
    except MemoryError:
        return BatchResult(path, error=f"{path}: checking it needed more memory than this machine allowed (check "
                                       "it in parts, each part as its own file)")
    except Exception as exc:  # noqa: BLE001 - one document's failure must not stop the others
        import traceback

        from ..core.errors import internal_error_line

        return BatchResult(path, error=internal_error_line(exc, path).removeprefix("studygap: internal error: "),
                           traceback="".join(traceback.format_exception(type(exc), exc, exc.__traceback__)))


def _one_line(text: str, path: str) -> str:
    line = " ".join(text.split())
    return line if line.startswith(path) else f"{path}: {line}"


def _read_for_sending(path: str, limits: Limits) -> bytes:
    from ..reading import read_bytes

    return read_bytes(Path(path), limits)


def run_batch(
    paths: Sequence[str | Path],
    checklist: str = "auto",
    config: Config | None = None,
    limits: Limits = DEFAULT_LIMITS,
    *,
    jobs: int | None = None,
    engine: str = "local",
    scheduler: str | None = None,
    client: Any = None,
    send: str = "path",
    progress: Progress | None = None,
    cache: bool = False,
    lost_after: float = DASK_LOST_AFTER,
) -> list[BatchResult]:
    """Check every document; one result per path, in input order; bad documents become error rows.

    ``engine="local"`` uses ``jobs`` processes (default: one per CPU; 1 runs in this process).
    ``engine="dask"`` submits to ``client`` or to the scheduler at ``scheduler`` (for example
    ``tcp://host:8786``); ``send="bytes"`` ships each document's bytes for workers that do not share the files.
    ``cache`` reuses the reports of unchanged files from earlier runs (see checker.resultcache). With Dask, a
    cluster left without workers or scheduler for ``lost_after`` seconds ends the run: the unfinished documents
    become error rows.
    """
    if engine not in ENGINES:
        raise UsageError(f"unknown engine {engine!r}; use one of {', '.join(ENGINES)}")
    if send not in SENDS:
        raise UsageError(f"unknown way of sending documents {send!r}; use one of {', '.join(SENDS)}")
    if jobs is not None and jobs < 1:
        raise UsageError("--jobs must be 1 or more")
    names = [str(p) for p in paths]
    config = config or Config()
    if not names:
        return []
    with stop_on_terminate():  # SIGTERM ends the batch like Ctrl-C: workers stopped, KeyboardInterrupt raised
        if engine == "dask":
            return _run_dask(names, checklist, config, limits, scheduler, client, send, progress, cache, lost_after)
        jobs = jobs or os.cpu_count() or 1
        if jobs == 1 or len(names) == 1:
            out = []
            for i, p in enumerate(names, start=1):
                out.append(check_one(p, checklist, config, limits, cache=cache))
                if progress is not None:
                    progress(i, len(names), p)
            return out
        return _run_pool(names, checklist, config, limits, min(jobs, len(names)), progress, cache)


def _run_pool(names: list[str], checklist: str, config: Config, limits: Limits, jobs: int,
              progress: Progress | None, cache: bool = False) -> list[BatchResult]:
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor, as_completed
    from concurrent.futures.process import BrokenProcessPool

    results: list[BatchResult | None] = [None] * len(names)
    frozen = multiprocessing.get_start_method() == "fork"
    if frozen:
        # forked workers share what this process has built (copy-on-write), so build it once here; frozen, those
        # objects are left alone by the workers' garbage collections, which would otherwise copy their pages
        warm(checklist)
        gc.freeze()
    pool = ProcessPoolExecutor(max_workers=jobs, initializer=_start_worker, initargs=(checklist, os.getpid()))
    try:
        futures = {pool.submit(check_one, p, checklist, config, limits, None, cache): i for i, p in enumerate(names)}
        if frozen:  # all workers are forked at the first submit
            gc.unfreeze()
            frozen = False
        for done, fut in enumerate(as_completed(futures), start=1):
            i = futures[fut]
            try:
                results[i] = fut.result()
            except BrokenProcessPool:
                results[i] = BatchResult(names[i], error=f"{names[i]}: the worker process checking it stopped "
                                                         "unexpectedly (out of memory?)")
            if progress is not None:
                progress(done, len(names), names[i])
    except BaseException:  # Ctrl-C, SIGTERM, a failing progress display: the workers stop now, not at the end
        if frozen:
            gc.unfreeze()
        _stop_pool(pool)
        raise
    pool.shutdown(wait=True)
    return [r for r in results if r is not None]


def _stop_pool(pool: Any, grace: float = 2.0) -> None:
    """End a process pool at once: queued documents are dropped and running workers terminated (then killed
    if they have not gone within `grace` seconds)."""
    import time

    processes = list((getattr(pool, "_processes", None) or {}).values())
    for proc in processes:
        try:
            proc.terminate()
        except (OSError, AttributeError, ValueError):
            pass
    pool.shutdown(wait=False, cancel_futures=True)
    deadline = time.monotonic() + grace
    for proc in processes:
        try:
            proc.join(max(0.0, deadline - time.monotonic()))
            if proc.is_alive():
                proc.kill()
                proc.join(1.0)
        except (OSError, AttributeError, ValueError, AssertionError):
            pass


@contextmanager
def _quiet_dask_logs() -> Iterator[list[bool]]:
    """Dask's own log lines (a lost scheduler gives dozens, with tracebacks) are kept off stderr during a run:
    what they mean reaches the user as one error row per unfinished document. After a run that lost its cluster
    they stay off (set the flag yielded): the client's reconnection attempts die with the process and would log
    their tracebacks then."""
    import logging

    try:
        import distributed  # noqa: F401 - its logging set-up (a handler on "distributed") is in place from here
    except ImportError:
        pass  # the run says so itself

    # Dask sets levels on child loggers ("distributed.client"), which a parent's level does not override: the
    # handlers are silenced as well as the loggers
    loggers = [logging.getLogger(name) for name in ("distributed", "tornado", "asyncio")]
    quieted = loggers + [h for lg in loggers for h in lg.handlers]
    levels = [q.level for q in quieted]
    for q in quieted:
        q.setLevel(logging.CRITICAL + 1)
    lost = [False]
    try:
        yield lost
    finally:
        if not lost[0]:
            for q, level in zip(quieted, levels):
                q.setLevel(level)


def _run_dask(names: list[str], checklist: str, config: Config, limits: Limits, scheduler: str | None, client: Any,
              send: str, progress: Progress | None, cache: bool = False,
              lost_after: float = DASK_LOST_AFTER) -> list[BatchResult]:
    with _quiet_dask_logs() as lost:
        try:
            results = _run_dask_quietly(names, checklist, config, limits, scheduler, client, send, progress,
                                        cache, lost_after)
        except BaseException:
            lost[0] = True
            raise
        lost[0] = any(r.error.endswith(LOST) for r in results)
        return results


def _run_dask_quietly(names: list[str], checklist: str, config: Config, limits: Limits, scheduler: str | None,
                      client: Any, send: str, progress: Progress | None, cache: bool,
                      lost_after: float) -> list[BatchResult]:
    try:
        from distributed import Client
    except ImportError:
        raise UsageError("the dask engine needs Dask distributed: pip install 'studygap[dask]'") from None
    own = client is None
    if own:
        if not scheduler:
            raise UsageError("the dask engine needs --scheduler ADDRESS (for example tcp://host:8786)")
        try:
            client = Client(scheduler, timeout=30)
        except (OSError, TimeoutError) as exc:
            raise UsageError(f"cannot reach the Dask scheduler at {scheduler}: {exc}") from None
    results: list[BatchResult | None] = [None] * len(names)
    done = 0

    def finished(i: int, result: BatchResult) -> None:
        nonlocal done
        results[i] = result
        done += 1
        if progress is not None:
            progress(done, len(names), names[i])

    try:
        try:
            client.run(warm, checklist)
        except Exception:  # noqa: BLE001 - warming is an optimisation; each task still works without it
            pass
        index: dict[Any, int] = {}
        futures = []
        for i, p in enumerate(names):
            data = None
            if send == "bytes":
                try:
                    data = _read_for_sending(p, limits)
                except StudygapError as exc:
                    finished(i, BatchResult(p, error=_one_line(str(exc), p)))
                    continue
            fut = client.submit(check_one, p, checklist, config, limits, data, cache and data is None, pure=False)
            index[fut.key] = i
            futures.append(fut)
        _collect_dask(client, futures, index, names, finished, lost_after)
    except BaseException:  # Ctrl-C or SIGTERM: the cluster drops this run's tasks instead of finishing them
        try:
            client.cancel([f for f in futures if not f.done()], force=True)
        except Exception:  # noqa: BLE001 - a lost scheduler cannot be told; the tasks die with this client
            pass
        raise
    finally:
        if own:
            try:
                client.close(timeout=10)
            except Exception:  # noqa: BLE001 - a scheduler that is gone cannot say goodbye
                pass
    return [r for r in results if r is not None]


def _collect_dask(client: Any, futures: list, index: dict, names: list[str], finished: Callable,
                  lost_after: float) -> None:
    """Take each task's result as it comes; when the cluster has had no worker, or the scheduler has been out of
    reach, for lost_after seconds, every unfinished document becomes an error row instead of a wait forever."""
    import time

    from distributed import wait

    pending = set(futures)
    lost_since: float | None = None
    while pending:
        try:
            done, pending = wait(list(pending), timeout=1.0, return_when="FIRST_COMPLETED")
        except TimeoutError:
            done = set()
        except Exception:  # noqa: BLE001 - the connection itself failed: treated as a lost scheduler below
            done = set()
        for fut in sorted(done, key=lambda f: index[f.key]):
            i = index[fut.key]
            try:
                if fut.status == "error":
                    exc = fut.exception()
                    result = BatchResult(names[i], error=f"{names[i]}: the Dask task failed "
                                                         f"({type(exc).__name__}: {' '.join(str(exc).split())})")
                elif fut.status == "finished":
                    result = fut.result()
                else:  # cancelled (the scheduler restarted or dropped it)
                    result = BatchResult(names[i], error=f"{names[i]}: the Dask cluster dropped its task "
                                                         f"({fut.status})")
                fut.release()
            except Exception as exc:  # noqa: BLE001 - the scheduler or worker went away while handing it over
                result = BatchResult(names[i], error=f"{names[i]}: the Dask cluster lost the result on its way back "
                                                     f"({type(exc).__name__}) {LOST}")
            finished(i, result)
        if done:
            lost_since = None
            continue
        if _cluster_usable(client):
            lost_since = None
        elif lost_since is None:
            lost_since = time.monotonic()
        elif time.monotonic() - lost_since >= lost_after:
            why = (f"the Dask cluster had no worker, or its scheduler could not be reached, for {lost_after:g} s "
                   f"{LOST}")
            for fut in sorted(pending, key=lambda f: index[f.key]):
                finished(index[fut.key], BatchResult(names[index[fut.key]], error=f"{names[index[fut.key]]}: {why}"))
            try:
                client.cancel(list(pending), force=True)
            except Exception:  # noqa: BLE001 - nothing more to do for a cluster that is gone
                pass
            return


def _cluster_usable(client: Any) -> bool:
    """Whether the client is connected to a scheduler that has at least one worker (from the client's own view,
    without a round trip that could hang)."""
    try:
        if getattr(client, "status", "running") != "running":
            return False
        return bool(client.scheduler_info().get("workers"))
    except Exception:  # noqa: BLE001 - any failure to tell means the cluster is not usable now
        return False


def errors_of(results: Sequence[BatchResult]) -> list[BatchResult]:
    return [r for r in results if not r.ok]
