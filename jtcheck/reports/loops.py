"""pyHanko signs and validates through ``asyncio.run``, which refuses to start inside a running event loop
(for example in a thread where an async framework or a browser-automation library keeps one).  The public
signing and verification functions go through :func:`outside_event_loop`: called directly when no loop
runs in this thread, else in a short-lived worker thread."""
from __future__ import annotations

import asyncio
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from typing import TypeVar

T = TypeVar("T")


def outside_event_loop(fn: Callable[..., T], *args, **kwargs) -> T:
    """``fn(*args, **kwargs)``, run where ``asyncio.run`` may start a loop of its own."""
    try:
        asyncio.get_running_loop()
    except RuntimeError:
        return fn(*args, **kwargs)
    with ThreadPoolExecutor(max_workers=1, thread_name_prefix="jtcheck-pdf") as pool:
        return pool.submit(fn, *args, **kwargs).result()
