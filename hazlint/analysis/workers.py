"""Work items over every core of this machine, or over a Dask cluster.

The prover cuts its work into items whose results do not depend on which process computes
them or on how many there are (see DEVELOPERS.md, "Every core, a cluster"); this module only
runs them. One :class:`Session` per prover pass ships the design (the ``shared`` value: the
gate graph and what the items need of the run) once to each worker, then runs any number of
:meth:`Session.map` calls over it; results come back in item order, so the caller merges
them in a fixed order whatever the number of workers.

Where the items run is a setting of the run (:func:`configured`, entered by ``api.lint``):

* ``jobs``: worker processes on this machine (``-j N``, configuration ``jobs``; default all
  cores the process may use). ``jobs = 1`` runs every item here, in this process, with no
  pool, and so does a design smaller than :data:`MIN_NODES` gate-graph nodes (the pool's
  start-up would cost more than it saves) or a call with fewer than two items.
* ``scheduler``: the address of a Dask distributed scheduler (``--scheduler
  tcp://host:8786``, configuration ``scheduler``); the design is scattered to every worker
  once (``broadcast``) and each item is one task. Needs the optional ``distributed``
  package (extra ``cluster``) here and on the workers, with the same hazlint version.

An item's function is called as ``func(shared, common, item, local)``: ``common`` is what
every item of one ``map`` call needs, ``local`` a dict the function may use to keep what it
derives from ``shared`` for later items on the same worker (one per worker and session).
The run's time budget goes with each item as the seconds left when it was handed out; a
worker that runs into it says so, and the run is marked incomplete as if it had been here.
"""
from __future__ import annotations

import contextlib
import contextvars
import itertools
import logging
import os
import pickle
import threading
from dataclasses import dataclass
from typing import Any, Callable, Iterator, Sequence

from .. import budget
from ..errors import HazlintError

#: designs with fewer gate-graph nodes run every item in this process (environment
#: ``HAZLINT_PARALLEL_MIN_NODES`` overrides it; tests set 0 to run small designs in a pool)
MIN_NODES = 2000
SCHEDULER_TIMEOUT = 10.0       # seconds to reach a Dask scheduler before giving up (exit 2)
log = logging.getLogger("hazlint.workers")


@dataclass(frozen=True)
class Settings:
    jobs: int | None = None          # None: every core this process may use
    scheduler: str | None = None     # Dask scheduler address; None: this machine
    client: Any = None               # the run's Dask client (connected once per run)


_CURRENT: contextvars.ContextVar[Settings] = contextvars.ContextVar("hazlint_workers",
                                                                    default=Settings())


def cores() -> int:
    """The cores this process may run on."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


@contextlib.contextmanager
def configured(jobs: int | None = None, scheduler: str | None = None) -> Iterator[Settings]:
    """Run the ``with`` block with these worker settings (a run already configured keeps
    its own when both are None)."""
    if jobs is None and not scheduler:
        yield _CURRENT.get()
        return
    # the scheduler is reached at the start of the run: a wrong address fails (exit 2)
    # before the slow work, not after it
    client = connect(scheduler) if scheduler else None
    s = Settings(jobs=jobs, scheduler=scheduler or None, client=client)
    token = _CURRENT.set(s)
    try:
        yield s
    finally:
        _CURRENT.reset(token)
        if client is not None:
            client.close()


def settings() -> Settings:
    return _CURRENT.get()


def _min_nodes() -> int:
    v = os.environ.get("HAZLINT_PARALLEL_MIN_NODES")
    try:
        return int(v) if v not in (None, "") else MIN_NODES
    except ValueError:
        return MIN_NODES


def planned_workers(size: int) -> int:
    """How many local worker processes a session over a design of ``size`` nodes uses
    (1: none, everything in this process); with a scheduler, the cluster decides."""
    s = _CURRENT.get()
    jobs = s.jobs if s.jobs is not None else cores()
    if jobs <= 1 or size < _min_nodes():
        return 1
    return jobs


class Session:
    """Where the items of one prover pass run; a context manager.

    ``size`` (gate-graph nodes) decides whether a local pool is worth starting. Nothing
    starts before the first :meth:`map` call with at least two items."""

    def __init__(self, shared: Any, size: int):
        self.shared = shared
        self.size = size
        self.settings = _CURRENT.get()
        self.local: dict = {}            # the in-process worker's own memo
        self._pool = None
        self._client = None
        self._shared_future = None
        self.token = f"{os.getpid()}-{id(self)}-{next(_COUNTER)}"
        self.remote_items = 0            # items run outside this process (for tests/bench)

    def __enter__(self) -> "Session":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def close(self) -> None:
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None
        if self._client is not None:
            try:
                if self._shared_future is not None:
                    self._client.cancel([self._shared_future])
                self._client.run(_forget, self.token)
            except Exception:  # noqa: BLE001 - a cluster going away at the end is harmless
                pass
            if self._client is not self.settings.client:
                self._client.close()
            self._client = None

    # -----------------------------------------------------------------------------------
    def map(self, func: Callable, items: Sequence[Any], common: Any = None) -> list:
        """``func(shared, common, item, local)`` for every item, results in item order."""
        items = list(items)
        if self.settings.scheduler is not None and items:
            return self._map_cluster(func, items, common)
        if len(items) < 2 or planned_workers(self.size) <= 1:
            return [_run_here(func, self.shared, common, it, self.local) for it in items]
        return self._map_pool(func, items, common)

    def _map_pool(self, func, items, common) -> list:
        from concurrent.futures import BrokenExecutor
        n = min(planned_workers(self.size), 64)
        if self._pool is None:
            self._pool = _start_pool(n, self.shared)
        left = _time_left()
        try:
            futs = [self._pool.submit(_pool_item, func, common, it, left) for it in items]
            out = [_settle(f.result()) for f in futs]
        except BrokenExecutor:
            raise HazlintError("a prover worker process ended abruptly (out of memory?); "
                               "run with fewer worker processes (-j, configuration 'jobs')"
                               ) from None
        self.remote_items += len(items)
        log.debug("%s: %d items in %d worker processes", getattr(func, "__name__", func),
                  len(items), n)
        return out

    def _map_cluster(self, func, items, common) -> list:
        client = self._connect()
        if self._shared_future is None:
            self._shared_future = client.scatter(self.shared, broadcast=True, hash=False)
        [common_f] = client.scatter([common], broadcast=True, hash=False)
        left = _time_left()
        futs = client.map(_cluster_item, items, fn=func, shared=self._shared_future,
                          common=common_f, token=self.token, left=left, pure=False)
        try:
            out = [_settle(r) for r in client.gather(futs)]
        finally:
            client.cancel([common_f])
        self.remote_items += len(items)
        log.debug("%s: %d items on the cluster at %s", getattr(func, "__name__", func),
                  len(items), self.settings.scheduler)
        return out

    def workers(self) -> int:
        """How many workers this session's items are spread over (1: this process)."""
        if self.settings.scheduler is None:
            return planned_workers(self.size)
        try:
            return max(1, len(self._connect().scheduler_info()["workers"]))
        except (OSError, KeyError, TimeoutError):
            return 1

    def _connect(self):
        if self._client is None:
            self._client = self.settings.client or connect(self.settings.scheduler)
        return self._client


_COUNTER = itertools.count()


def connect(address: str):
    """A Dask client on ``address``; a :class:`HazlintError` (exit 2) when the package is
    missing or the scheduler cannot be reached."""
    try:
        from distributed import Client
    except ImportError:
        raise HazlintError(f"--scheduler {address}: the Dask 'distributed' package is not "
                           "installed (pip install 'hazlint[cluster]')") from None
    try:
        return Client(address, timeout=SCHEDULER_TIMEOUT, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as exc:
        raise HazlintError(f"cannot reach the Dask scheduler at {address}: "
                           f"{type(exc).__name__}: {exc}") from None


# ---------------------------------------------------------------------------------------------
# What runs in a worker

_WORKER_SHARED: Any = None
_WORKER_LOCAL: dict = {}
_CLUSTER_LOCAL: dict[str, dict] = {}


def _run_here(func, shared, common, item, local):
    return func(shared, common, item, local)


def _time_left() -> tuple[float, float]:
    """(the run's time budget in seconds, seconds left of it); (0, 0) for no budget."""
    d = budget.current()
    if d is None or not d.seconds:
        return 0.0, 0.0
    return d.seconds, d.left()


def _run_budgeted(func, shared, common, item, local, left: tuple[float, float]):
    """The item under the time left when it was handed out; (result, budget hit)."""
    from .. import __version__
    total, rest = left
    # a budget already used up is a deadline now, not "no budget" (which is 0 seconds)
    with budget.using(max(rest, 1e-9) if total else 0) as d:
        d.seconds = total           # the reason names the run's budget, not what was left
        res = func(shared, common, item, local)
        return res, d.hit, __version__


def _settle(packed):
    """Unpack a worker's answer; a budget hit there is a budget hit of this run."""
    from .. import __version__
    res, hit, version = packed
    if version != __version__:
        raise HazlintError(f"a worker runs hazlint {version}, this process {__version__}: "
                           "install the same version on every worker")
    if hit:
        d = budget.current()
        if d is not None:
            d.hit = True
    return res


def _install(payload, pickled: bool) -> None:
    global _WORKER_SHARED
    _WORKER_SHARED = pickle.loads(payload) if pickled else payload
    _WORKER_LOCAL.clear()


def _pool_item(func, common, item, left):
    return _run_budgeted(func, _WORKER_SHARED, common, item, _WORKER_LOCAL, left)


def _cluster_item(item, *, fn, shared, common, token, left):
    local = _CLUSTER_LOCAL.setdefault(token, {})
    return _run_budgeted(fn, shared, common, item, local, left)


def _forget(token: str) -> None:
    _CLUSTER_LOCAL.pop(token, None)


def _start_pool(n: int, shared):
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor
    # fork is the cheapest start (the design is inherited, not copied), but forking a
    # process that runs other threads (the language server, a Dask client) can copy a held
    # lock: then a fork server starts them and each gets the design pickled, once
    methods = multiprocessing.get_all_start_methods()
    method = "fork" if threading.active_count() == 1 and "fork" in methods else \
        "forkserver" if "forkserver" in methods else "spawn"
    ctx = multiprocessing.get_context(method)
    payload = shared if method == "fork" else \
        pickle.dumps(shared, protocol=pickle.HIGHEST_PROTOCOL)
    return ProcessPoolExecutor(max_workers=n, mp_context=ctx, initializer=_install,
                               initargs=(payload, method != "fork"))


# ---------------------------------------------------------------------------------------------
# Cutting work into items

def connected_groups(keyed: Sequence[tuple[int, Sequence[Any]]]) -> list[list[int]]:
    """Indices that share a key (directly or through others) in one group; groups in the
    order of their first index, indices ascending (union-find)."""
    parent: dict[int, int] = {}

    def find(a: int) -> int:
        while parent[a] != a:
            parent[a] = parent[parent[a]]
            a = parent[a]
        return a
    owner: dict[Any, int] = {}
    for i, keys in keyed:
        parent.setdefault(i, i)
        for k in keys:
            j = owner.setdefault(k, i)
            a, b = find(i), find(j)
            if a != b:
                parent[max(a, b)] = min(a, b)
    groups: dict[int, list[int]] = {}
    for i, _ in keyed:
        groups.setdefault(find(i), []).append(i)
    return [sorted(g) for g in sorted(groups.values(), key=min)]


def pack(groups: list[list[int]], n: int) -> list[list[int]]:
    """Consecutive groups joined into at most ``n`` items of about equal size (groups are
    never cut)."""
    if n <= 1 or len(groups) <= 1:
        return [[i for g in groups for i in g]] if groups else []
    total = sum(len(g) for g in groups)
    target = -(-total // n)
    out: list[list[int]] = []
    cur: list[int] = []
    for g in groups:
        cur.extend(g)
        if len(cur) >= target:
            out.append(cur)
            cur = []
    if cur:
        out.append(cur)
    return out


def items_for(session: "Session | None", count: int, per_worker: int = 4) -> int:
    """How many items to cut ``count`` pieces of work into for ``session``: one in a
    single process, else ``per_worker`` per worker (a few, for balance)."""
    if session is None:
        return 1
    w = session.workers()
    return 1 if w <= 1 else max(1, min(count, w * per_worker))
