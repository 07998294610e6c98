"""Render specs as tasks on a Dask distributed scheduler (``figspec render --scheduler ADDRESS``).

Each task is the same :func:`figspec.build.render_one` a local worker process runs, so outputs
are byte-identical wherever they are rendered. The workers must see the spec, data and output
folders at the same paths (a shared file system), as on an HPC cluster; starting the scheduler
and its workers (``dask-jobqueue`` for SLURM, PBS, SGE ...) is the lab's, not figspec's.
"""

from __future__ import annotations

from typing import Iterator

from figspec.build import BuildOptions, SpecResult, render_one
from figspec.errors import Problem, UserError
from figspec.optional import require


def run_on_cluster(address: str, stale: dict[str, str], options: BuildOptions) -> Iterator[SpecResult]:
    """Yield each spec's result as its task finishes on the scheduler at ``address``."""
    distributed = require("distributed", "--scheduler")
    try:
        client = distributed.Client(address, timeout="10s", set_as_default=False)
    except (OSError, TimeoutError, ValueError) as err:
        raise UserError(Problem(f"--scheduler {address}: cannot reach a Dask scheduler there ({err})")) from None
    try:
        futures = [client.submit(render_one, name, options, why, pure=False, key=f"figspec-render-{i}")
                   for i, (name, why) in enumerate(stale.items())]
        with client.as_current():
            finished = distributed.as_completed(futures)
        for future in finished:
            yield future.result()
    finally:
        client.close()
