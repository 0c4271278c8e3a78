"""Whether this process is draining: about to stop, so load balancers should send it no more work.

Two signals say so, and either is enough:

- the drain file: while the file named by ``BURNPROOF_DRAIN_FILE`` exists, every worker
  of the pod answers ``/readyz`` with 503. Kubernetes' preStop hook creates it before the
  container gets SIGTERM (deploy/k8s/deployment.yaml), so the endpoint leaves the Service
  while in-flight requests still finish. The variable is read on every call, so a file
  created or removed at run time takes effect at once.
- the process flag: a gunicorn worker that received SIGTERM sets it (deploy/gunicorn.conf.py
  chains its SIGTERM handler to ``mark_draining``) and reports draining for any request it
  still answers. It is a per-process fact by nature (a signal reaches one process), hence a
  module-level flag rather than something kept on the app.
"""

from __future__ import annotations

import os
import threading
from collections.abc import Mapping

DRAIN_FILE_VARIABLE = "BURNPROOF_DRAIN_FILE"

_flag = threading.Event()  # set from a signal handler: an Event needs no lock of ours


def mark_draining() -> None:
    """Say that this process is stopping; safe to call from a signal handler."""
    _flag.set()


def clear_draining() -> None:
    """Forget the process flag (a test, or a process that is put back into service)."""
    _flag.clear()


def draining_reason(environ: Mapping[str, str] | None = None) -> str | None:
    """Why this process is draining, in words for ``/readyz``; None when it is not.

    ``environ`` defaults to ``os.environ``; an unset or empty ``BURNPROOF_DRAIN_FILE``
    means there is no drain file to look for.
    """
    if _flag.is_set():
        return "draining: this worker received SIGTERM and is finishing its last requests"
    path = (os.environ if environ is None else environ).get(DRAIN_FILE_VARIABLE, "")
    if path and os.path.lexists(path):
        return f"draining: the drain file named by {DRAIN_FILE_VARIABLE} exists"
    return None
