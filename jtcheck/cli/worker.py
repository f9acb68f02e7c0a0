"""``jtcheck worker``: runs batch-screening jobs from the Redis queue."""
from __future__ import annotations

import os

import click

from jtcheck.cli.exits import fail_input
from jtcheck.errors import InputError


@click.command("worker")
@click.option("--burst", is_flag=True, help="Run the queued batch jobs, then stop.")
def worker_cmd(burst):
    """Run batch-screening jobs from the Redis queue (needs REDIS_URL; several workers may share one queue)."""
    from jtcheck.batch.jobs import work

    url = os.environ.get("REDIS_URL", "").strip()
    if not url:
        fail_input(InputError("REDIS_URL", "set it to the Redis server the web app queues batch jobs on "
                                           "(e.g. redis://127.0.0.1:6379/0)"))
    work(url, burst=burst)
