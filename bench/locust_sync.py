"""Morning sync driven by locust (headless, in a subprocess) against gunicorn on loopback.

Run: ``.venv/bin/python -m bench.locust_sync [--crews 10 50]`` (needs ``pip install -e .[bench]``).
Each locust user is one crew: it sends its day's batch to POST /api/v1/sync/ once, then stops;
locust quits when every crew has sent. Prints locust's own p50/p95/p99 and throughput.
"""

import argparse
import json
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from bench import rig
from bench.common import gunicorn, migrate, print_machine, table
from bench.sync import login

LOCUSTFILE = """
import json, os
from locust import HttpUser, constant, events, task
from locust.exception import StopUser

PLAN = json.load(open(os.environ["PARAPET_PLAN"]))
DONE = {"n": 0}


@events.quitting.add_listener
def _dump(environment, **kwargs):
    stats = environment.stats.get("sync", "POST")
    out = {"requests": stats.num_requests, "failures": stats.num_failures}
    for q in (0.5, 0.95, 0.99):
        out[f"p{round(q * 100)}"] = stats.get_response_time_percentile(q)
    json.dump(out, open(os.environ["PARAPET_OUT"], "w"))


class Crew(HttpUser):
    wait_time = constant(0)

    def on_start(self):
        # locust may start a user again after one stops; with every crew sent, it has none.
        if not PLAN["crews"]:
            raise StopUser()
        self.crew = PLAN["crews"].pop()

    @task
    def send_the_day(self):
        with self.client.post("/api/v1/sync/", json={"records": self.crew["records"]},
                              headers={"Authorization": "Token " + self.crew["token"]},
                              name="sync", timeout=120, catch_response=True) as answer:
            results = answer.json().get("results", []) if answer.status_code == 200 else []
            applied = [r for r in results if r.get("status") == "applied"]
            if len(applied) != len(self.crew["records"]):
                answer.failure(f"not every record applied ({answer.status_code})")
        DONE["n"] += 1
        if DONE["n"] >= PLAN["total"]:
            self.environment.runner.quit()
        raise StopUser()
"""


def run(url: str, crews: list[rig.Crew], spawn_rate: int) -> dict[str, object]:
    tokens = [login(url, c.username) for c in crews]
    with tempfile.TemporaryDirectory() as folder:
        plan = Path(folder) / "plan.json"
        plan.write_text(
            json.dumps(
                {
                    "total": len(crews),
                    "crews": [
                        {"token": t, "records": c.records}
                        for c, t in zip(crews, tokens, strict=True)
                    ],
                }
            )
        )
        locustfile = Path(folder) / "locustfile.py"
        locustfile.write_text(LOCUSTFILE)
        started = time.perf_counter()
        result = subprocess.run(
            [
                sys.executable,
                "-m",
                "locust",
                "-f",
                str(locustfile),
                "--headless",
                "--host",
                url,
                "-u",
                str(len(crews)),
                "-r",
                str(spawn_rate),
                "-t",
                "600s",
                "--csv",
                str(Path(folder) / "out"),
                "--only-summary",
                "--loglevel",
                "WARNING",
            ],
            check=False,
            timeout=660,
            env={
                "PARAPET_PLAN": str(plan),
                "PARAPET_OUT": str(Path(folder) / "out.json"),
                "PATH": "/usr/bin:/bin",
            },
        )
        wall = time.perf_counter() - started
        out = Path(folder) / "out.json"
        if not out.exists():
            raise RuntimeError(f"locust reported nothing (exit {result.returncode}); see above")
        row = json.loads(out.read_text())
    sheets = len(crews) * rig.SHEETS_PER_BATCH
    return {"N": len(crews), **row, "wall_s": wall, "sheets_per_s": sheets / wall}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--crews", type=int, nargs="+", default=[10, 50])
    parser.add_argument(
        "--workers", type=int, default=None, help="the deploy's gunicorn.conf.py: one per core"
    )
    parser.add_argument("--spawn-rate", type=int, default=8, help="crews starting per second")
    args = parser.parse_args()
    migrate()
    print_machine()
    tag = f"l{int(time.time())}"
    batches = {n: rig.make_crews(n, f"{tag}-n{n}") for n in args.crews}
    rows = []
    with gunicorn(workers=args.workers) as url:
        warm = rig.make_crews(2, f"{tag}-warm")
        run(url, warm, 2)
        for n in args.crews:
            rows.append(run(url, batches[n], args.spawn_rate))
            row = rows[-1]
            print(
                f"x; locust N={n}, every crew at once: {row['sheets_per_s']:.1f} sheets/s,"
                f" p95 {row['p95']} ms, {row['failures']} failures (the queue behind the workers;"
                " its floor is bench.sync's)",
                flush=True,
            )
    print(table(rows, ["N", "requests", "failures", "wall_s", "sheets_per_s", "p50", "p95", "p99"]))


if __name__ == "__main__":
    main()
