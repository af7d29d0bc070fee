#!/usr/bin/env python3
"""Measures the squad-week board page for the demo's 25-athlete squad in
headless Chromium: time until the page's load event, and bytes transferred
(compressed, page plus its CSS and script), on a fresh browser context
(empty cache) each time.

Two cases, each repeated:
- "after a change": a session is moved through the API first, so the squad
  plan is recomputed for the page (the plan cache cannot answer);
- "unchanged": the plan is answered from the plan cache.

    scripts/board-speed.py [path/to/glycoweek] [--runs N]

Needs Debian's chromium and the test venv (see .ci/run). Exits non-zero if
the median of either case is over 1 s or any page transfers 300 KB or more.
"""

import json
import statistics
import sys
import tempfile
import urllib.request
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests/browser"))
from board_test import CHROMIUM_ARGS, Api, start_service, sign_in  # noqa: E402
from playwright.sync_api import sync_playwright  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
args = [a for a in sys.argv[1:] if not a.startswith("--")]
runs = int(sys.argv[sys.argv.index("--runs") + 1]) if "--runs" in sys.argv else 10
if "--runs" in sys.argv:
    args = [a for a in args if a != str(runs)]
binary = Path(args[0]) if args else next(
    p for p in [ROOT / "target/release/glycoweek", ROOT / "target/debug/glycoweek"] if p.exists()
)
import board_test  # noqa: E402
board_test.BINARY = binary

MEASURE = """() => {
  const nav = performance.getEntriesByType('navigation')[0];
  const res = performance.getEntriesByType('resource');
  return {
    load_ms: nav.loadEventEnd - nav.startTime,
    bytes: nav.transferSize + res.reduce((s, r) => s + r.transferSize, 0),
    html_bytes: nav.transferSize,
    decoded_bytes: nav.decodedBodySize,
  };
}"""


def main():
    tmp = tempfile.TemporaryDirectory()
    proc, base, admin = start_service(Path(tmp.name) / "speed.db")
    try:
        api = Api(base, admin)
        team = api.get("/v1/teams")[0]["items"][0]["id"]
        athletes = api.get(f"/v1/teams/{team}/athletes?limit=200")[0]["items"]
        summary = api.get(f"/v1/teams/{team}/plan/summary")[0]
        sessions = api.get(f"/v1/teams/{team}/sessions?from={summary['from']}&to={summary['to']}")[0]["items"]
        moved = next(s for s in sessions if s["kind"] == "training")
        results = {"after a change": [], "unchanged": []}
        with sync_playwright() as pw:
            browser = pw.chromium.launch(executable_path="/usr/bin/chromium", args=CHROMIUM_ARGS)
            # One signed-in session, reused by fresh contexts (empty caches).
            ctx = browser.new_context()
            sign_in(ctx.new_page(), base, admin)
            state = ctx.storage_state()
            ctx.close()
            for i in range(runs):
                for case in ("after a change", "unchanged"):
                    if case == "after a change":
                        _, headers, _ = api.call("GET", f"/v1/sessions/{moved['id']}")
                        time = "17:00" if i % 2 == 0 else moved["start_time"]
                        status, _, body = api.call("PATCH", f"/v1/sessions/{moved['id']}", {"start_time": time}, {"If-Match": headers["etag"]})
                        assert status == 200, body
                    c = browser.new_context(storage_state=state)
                    page = c.new_page()
                    page.goto(f"{base}/board/teams/{team}", wait_until="load")
                    assert page.locator("td.cell").count() == len(athletes) * 7
                    results[case].append(page.evaluate(MEASURE))
                    c.close()
            browser.close()
    finally:
        proc.terminate()
        proc.wait(timeout=10)
    ok = True
    print(f"squad week, {len(athletes)} athletes x 7 days, {runs} runs per case, binary {binary.relative_to(ROOT) if binary.is_relative_to(ROOT) else binary}")
    print("| case | median load ms | max load ms | transferred KB (page + assets) | HTML KB compressed / uncompressed |")
    print("|---|---:|---:|---:|---:|")
    for case, rs in results.items():
        loads = [r["load_ms"] for r in rs]
        kb = max(r["bytes"] for r in rs) / 1024
        print(f"| {case} | {statistics.median(loads):.0f} | {max(loads):.0f} | {kb:.1f} | {rs[0]['html_bytes'] / 1024:.1f} / {rs[0]['decoded_bytes'] / 1024:.1f} |")
        ok &= statistics.median(loads) < 1000 and kb < 300
    print("within budget (median < 1 s, < 300 KB)" if ok else "OVER BUDGET")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
