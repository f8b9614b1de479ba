"""The phone bundle: gzipped size of the first load, and time to a usable shell from the cache.

Run: ``.venv/bin/python -m bench.bundle [--runs 5]``. Reads the built app in
compliance/static/app/ (``cd frontend && npm run build``), serves it from a loopback gunicorn, and
drives headless Chromium (Debian's /usr/bin/chromium via Playwright) with the CPU slowed 4x.
"""

import argparse
import gzip
import re
import statistics
import tempfile
from pathlib import Path

from bench import rig
from bench.common import ROOT, gunicorn, migrate, print_machine

APP = ROOT / "compliance" / "static" / "app"
CHROMIUM = "/usr/bin/chromium"
ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]
USABLE = """() => {
  const main = document.querySelector('#app main');
  if (!main || main.textContent.includes('Opening')) return false;
  return performance.now();
}"""


def first_load_files() -> list[Path]:
    """index.html, what it links under /static/app/, and the service worker."""
    html = (APP / "index.html").read_text()
    linked = re.findall(r'(?:src|href)="/static/app/([^"]+)"', html)
    files = [APP / "index.html", *(APP / name for name in linked), APP / "sw.js"]
    return [f for f in files if f.is_file()]


def sizes() -> list[tuple[str, int, int]]:
    return [
        (str(f.relative_to(APP)), len(f.read_bytes()), len(gzip.compress(f.read_bytes(), 9)))
        for f in first_load_files()
    ]


def time_to_usable(url: str, runs: int) -> dict[str, object]:
    from playwright.sync_api import sync_playwright

    (crew,) = rig.make_crews(1, f"b{rig.uuid.uuid4().hex[:8]}")
    with tempfile.TemporaryDirectory() as profile, sync_playwright() as p:
        context = p.chromium.launch_persistent_context(
            profile, executable_path=CHROMIUM, args=ARGS, viewport={"width": 390, "height": 844}
        )
        context.set_default_timeout(30000)
        page = context.pages[0] if context.pages else context.new_page()
        cdp = context.new_cdp_session(page)
        # first visit, online, CPU 4x slower: nothing cached yet
        cdp.send("Emulation.setCPUThrottlingRate", {"rate": 4})
        page.goto(url + "/")
        cold_ms = page.wait_for_function(USABLE).json_value()
        cdp.send("Emulation.setCPUThrottlingRate", {"rate": 1})
        response = context.request.post(
            url + "/api/v1/auth/login/",
            data={"username": crew.username, "password": rig.PASSWORD},
        )
        assert response.ok, response.text()
        page.evaluate("navigator.serviceWorker.ready.then(() => true)")
        page.reload()
        page.wait_for_function(USABLE)
        page.wait_for_load_state("networkidle")
        assert page.evaluate("!!navigator.serviceWorker.controller"), "no service worker"
        context.set_offline(True)
        cdp.send("Emulation.setCPUThrottlingRate", {"rate": 4})
        warm = []
        shell = []
        screen = ""
        for _ in range(runs):
            page.reload()
            warm.append(page.wait_for_function(USABLE).json_value())
            # The floor: the shell parsed and the app's script run (DOMContentLoaded waits for
            # the module script), before anything is read from IndexedDB or the worker's cache.
            shell.append(
                page.evaluate(
                    "performance.getEntriesByType('navigation')[0].domContentLoadedEventEnd"
                )
            )
            screen = page.evaluate("document.querySelector('#app main').innerText.slice(0, 60)")
        from_sw = page.evaluate("performance.getEntriesByType('navigation')[0].workerStart > 0")
        context.close()
    return {
        "cold_ms": cold_ms,
        "warm_ms": warm,
        "shell_ms": shell,
        "screen": screen,
        "from_sw": from_sw,
    }


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--runs", type=int, default=5)
    args = parser.parse_args()
    if not (APP / "index.html").is_file():
        print(f"The app is not built: {APP / 'index.html'} is missing (npm run build).")
        return
    migrate()
    print_machine()
    rows = sizes()
    print("\n| file | bytes | gzip -9 bytes |\n|---|---|---|")
    for name, raw, packed in rows:
        print(f"| {name} | {raw:,} | {packed:,} |")
    print(f"| first load (all above) | {sum(r[1] for r in rows):,} | {sum(r[2] for r in rows):,} |")
    if not (APP / "sw.js").is_file():
        print("\nNo service worker in the build (sw.js missing): no offline timing.")
        return
    # DEBUG on only so the session cookie is not marked Secure over plain loopback HTTP
    with gunicorn(workers=2, debug=True) as url:
        result = time_to_usable(url.replace("127.0.0.1", "localhost"), args.runs)
    warm = result["warm_ms"]
    print(
        f"\nCPU throttled 4x (CDP Emulation.setCPUThrottlingRate), viewport 390x844:\n"
        f"- first visit online, nothing cached, to a usable screen: {result['cold_ms']:.0f} ms\n"
        f"- offline reload from the service-worker cache, signed in, to a usable screen: "
        f"median {statistics.median(warm):.0f} ms, min {min(warm):.0f}, max {max(warm):.0f} "
        f"over {len(warm)} runs (served by the worker: {result['from_sw']})\n"
        f"- screen shown offline: {result['screen']!r}"
    )
    shell = statistics.median(result["shell_ms"])  # type: ignore[arg-type]
    first_js_css = sum(packed for name, _, packed in rows if name.endswith((".js", ".css")))
    first_js_css -= next((packed for name, _, packed in rows if name == "sw.js"), 0)
    print(
        f"\nx; phone offline start median {statistics.median(warm):.0f} ms at 4x CPU;"
        f" floor (shell parsed, script run) {shell:.0f} ms;"
        f" ratio {statistics.median(warm) / shell:.1f}x (target 1000 ms)"
    )
    print(
        f"x; first load JS+CSS {first_js_css:,} bytes gzipped (the page's own, not sw.js);"
        f" with sw.js {sum(r[2] for r in rows):,} (target 50 kB)"
    )


if __name__ == "__main__":
    main()
