"""gunicorn's settings for Parapet, read by ``gunicorn compliance.wsgi`` run from this folder.

Workers: one per CPU this process may run on, and at least two (so one long request, an
upload being verified, does not hold up every phone), unless WEB_CONCURRENCY says otherwise.
A request here is Python from start to end (parsing a batch, the verdicts, checking a PDF)
with short waits on PostgreSQL, so a worker beyond the cores only takes turns with the
others: on 2 cores, 4 workers spent about a third more CPU on each of the morning sync's batches
than 2 and got through fewer of them (bench/RESULTS.md §7). Requests above the worker count
wait in the listen queue, in order.
"""

import os

workers = int(os.environ.get("WEB_CONCURRENCY") or 0) or max(2, len(os.sched_getaffinity(0)))
# A batch of 200 sheets or a month's PDF can take tens of seconds on a busy small machine.
timeout = 120
graceful_timeout = 5
