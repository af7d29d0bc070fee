#!/usr/bin/env python3
"""Browser tests of the squad board, in Debian's Chromium driven by Playwright.

Starts the real binary with the demo club on a temporary database, signs in,
opens every view, compares the numbers shown with the API's JSON, adjusts the
week (move a session, a conflicting edit, a pin, minutes played), prints the
kitchen sheet to PDF, checks a read-only token, sign-out and CSRF refusals,
runs the vendored axe-core checker on every view, and fails on any console
error. Screenshots go to target/board-screenshots/.

    tests/browser/board_test.py [path/to/glycoweek]
"""

import csv
import io
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile
import time
import traceback
import urllib.request
from pathlib import Path

from playwright.sync_api import sync_playwright
from pypdf import PdfReader

ROOT = Path(__file__).resolve().parents[2]
BINARY = Path(sys.argv[1]) if len(sys.argv) > 1 else ROOT / "target/debug/glycoweek"
SHOTS = ROOT / "target/board-screenshots"
AXE = ROOT / "tests/browser/vendor/axe-core-4.14.1/axe.min.js"
CHROMIUM_ARGS = [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
]


def start_service(db: Path):
    proc = subprocess.Popen(
        [str(BINARY), "--demo", "--database", str(db), "--listen", "127.0.0.1:0",
         "--rate-limit-per-minute", "0"],
        stderr=subprocess.PIPE, stdout=subprocess.DEVNULL, text=True,
    )
    token = base = None
    deadline = time.time() + 60
    while time.time() < deadline and base is None:
        line = proc.stderr.readline()
        if not line:
            if proc.poll() is not None:
                raise RuntimeError("service exited early")
            continue
        m = re.search(r"\b(gwk_[0-9a-f]{64})\b", line)
        if m:
            token = m.group(1)
        m = re.search(r"listening on (http://[0-9.:]+)", line)
        if m:
            base = m.group(1)
    if not (token and base):
        proc.kill()
        raise RuntimeError("service did not start")
    # Keep draining stderr so the service never blocks on a full pipe.
    import threading
    threading.Thread(target=lambda: [None for _ in proc.stderr], daemon=True).start()
    return proc, base, token


class Api:
    def __init__(self, base, token):
        self.base, self.token = base, token

    def call(self, method, path, body=None, headers=None):
        data = json.dumps(body).encode() if body is not None else None
        req = urllib.request.Request(self.base + path, data=data, method=method)
        req.add_header("Authorization", "Bearer " + self.token)
        if body is not None:
            req.add_header("Content-Type", "application/merge-patch+json" if method == "PATCH" else "application/json")
        for k, v in (headers or {}).items():
            req.add_header(k, v)
        try:
            with urllib.request.urlopen(req) as res:
                raw = res.read()
                return res.status, dict(res.headers), (json.loads(raw) if raw and res.headers.get_content_type().endswith("json") else raw)
        except urllib.error.HTTPError as e:
            return e.code, dict(e.headers), e.read()

    def get(self, path):
        status, headers, body = self.call("GET", path)
        assert status == 200, (path, status, body)
        return body, headers


def one(x, places):
    """The board's rounding: fixed decimals, never '-0'."""
    s = f"{x:.{places}f}"
    return s.lstrip("-") if float(s) == 0 else s


class Run:
    def __init__(self):
        self.passed, self.failed, self.console = 0, 0, []

    def check(self, name, fn):
        try:
            fn()
            self.passed += 1
            print(f"ok      {name}")
        except Exception:
            self.failed += 1
            print(f"FAILED  {name}")
            traceback.print_exc()


# Pages the tests answer with an error status on purpose (a refused sign-in,
# a conflicting edit, a rejected value): Chromium logs each as a failed load.
EXPECTED_STATUS = re.compile(r"Failed to load resource: the server responded with a status of (401|412|422)")


def watch(page, errors):
    def console(m):
        if m.type == "error" and not EXPECTED_STATUS.search(m.text):
            errors.append(f"{page.url}: {m.text}")
    page.on("console", console)
    page.on("pageerror", lambda e: errors.append(f"{page.url}: {e}"))


def axe_check(page, name, serious):
    page.evaluate(AXE.read_text())
    result = page.evaluate("axe.run(document, {resultTypes: ['violations']})")
    bad = [v for v in result["violations"] if v.get("impact") in ("serious", "critical")]
    for v in bad:
        serious.append(f"{name}: {v['id']} ({v['impact']}): {v['help']} at {[n['target'] for n in v['nodes'][:3]]}")


def shot(page, name):
    SHOTS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SHOTS / f"{name}.png"), full_page=True)
    # The first screenful, as a person opening the page sees it (for docs/).
    page.screenshot(path=str(SHOTS / f"{name}-top.png"))


def sign_in(page, base, token):
    page.goto(base + "/board/sign-in")
    page.fill("#token", token)
    page.click("button[type=submit]")
    page.wait_for_load_state("load")


def main():
    run = Run()
    tmp = tempfile.TemporaryDirectory()
    proc, base, admin = start_service(Path(tmp.name) / "board.db")
    try:
        admin_api = Api(base, admin)
        teams, _ = admin_api.get("/v1/teams")
        team = teams["items"][0]["id"]
        status, _, created = admin_api.call("POST", "/v1/tokens", {"label": "board planner", "role": "planner", "team_id": team})
        assert status == 201, created
        planner = created["secret"]
        status, _, created = admin_api.call("POST", "/v1/tokens", {"label": "board reader", "role": "reader", "team_id": team})
        reader = created["secret"]
        api = Api(base, planner)
        summary, _ = api.get(f"/v1/teams/{team}/plan/summary")
        sessions, _ = api.get(f"/v1/teams/{team}/sessions?from={summary['from']}&to={summary['to']}&limit=200")
        sessions = sessions["items"]
        match = next(s for s in sessions if s["kind"] == "match")
        training = next(s for s in sessions if s["kind"] == "training")
        athletes = sorted({r["display_name"] for r in summary["rows"]})
        serious = []

        with sync_playwright() as pw:
            browser = pw.chromium.launch(executable_path="/usr/bin/chromium", args=CHROMIUM_ARGS)
            ctx = browser.new_context(viewport={"width": 1366, "height": 900})
            page = ctx.new_page()
            watch(page, run.console)

            def sign_in_page():
                page.goto(base + "/board/teams/" + team)
                assert "/board/sign-in" in page.url, page.url
                shot(page, "sign-in")
                axe_check(page, "sign-in", serious)
                page.fill("#token", "gwk_" + "0" * 64)
                page.click("button[type=submit]")
                assert "not valid" in page.inner_text(".notice")
                page.fill("#token", planner)
                page.click("button[type=submit]")
                page.wait_for_load_state("load")
                assert page.url.startswith(f"{base}/board/teams/{team}"), page.url
                cookie = next(c for c in ctx.cookies() if c["name"] == "glycoweek_board")
                assert cookie["httpOnly"] and cookie["sameSite"] == "Strict", cookie
                assert page.evaluate("document.cookie") == "", "page scripts must not read the session"
            run.check("sign-in exchanges a token for an HttpOnly SameSite session", sign_in_page)

            def squad():
                cells = page.locator("td.cell")
                assert cells.count() == len(summary["rows"]), (cells.count(), len(summary["rows"]))
                assert page.locator("tbody th[scope=row]").count() == len(athletes)
                assert "match day" in page.inner_text("thead")
                row = summary["rows"][0]
                cell = page.locator(f"tr:has(a:text-is('{row['display_name']}')) td.cell[data-date='{row['date']}'] .g")
                assert cell.inner_text() == one(row["carbohydrate_g_per_kg"], 1)
                shot(page, "squad-week")
                axe_check(page, "squad-week", serious)
                page.click("text=by position group")
                assert page.locator("tr.group").count() >= 3
                shot(page, "squad-week-by-position")
            run.check("squad week shows every athlete-day with its g/kg, match distance and grouping", squad)

            def athlete():
                # The chosen athlete-day: the first athlete on the match day.
                row = next(r for r in summary["rows"] if r["date"] == match["local_date"])
                aid, date = row["athlete_id"], row["date"]
                plan, _ = api.get(f"/v1/athletes/{aid}/plan")
                day = next(d for d in plan["plan"]["days"] if d["date"] == date)["plan"]
                page.goto(f"{base}/board/athletes/{aid}")
                sec = page.locator(f"section#d-{date}")
                field = lambda f: sec.locator(f"[data-field={f}]").inner_text()
                assert field("carbohydrate_g_per_kg") == one(day["carbohydrate"]["g_per_kg"], 1)
                assert field("carbohydrate_g") == one(day["carbohydrate"]["g"], 0)
                assert field("protein_g_per_kg") == one(day["protein"]["g_per_kg"], 1)
                assert field("protein_g") == one(day["protein"]["g"], 0)
                assert field("fat_g") == one(day["fat"]["g"], 0)
                assert field("energy_kcal") == one(day["energy"]["kcal"], 0)
                assert field("energy_availability") == one(day["energy_availability"]["kcal_per_kg_fat_free_mass"], 1)
                assert sec.locator("table.occasions tbody tr").count() == len(day["eating_occasions"])
                assert sec.locator(".why dd").count() >= 4, "each number carries its reason"
                assert page.locator("svg#glycogen, svg[aria-labelledby^=glycogen]").count() == 1
                assert page.locator("aside.cautions").count() >= 1
                shot(page, "athlete-week")
                axe_check(page, "athlete-week", serious)
            run.check("athlete week shows the API's numbers for a chosen athlete-day", athlete)

            def cautions():
                # The demo squad has an athlete with a medical flag: it shows on their page.
                a = api.get(f"/v1/teams/{team}/athletes?limit=200")[0]["items"][5]
                _, headers, _ = api.call("GET", f"/v1/athletes/{a['id']}")
                status, _, body = api.call("PATCH", f"/v1/athletes/{a['id']}", {"health_flags": ["diabetes"]}, {"If-Match": headers["etag"]})
                assert status == 200, body
                page.goto(f"{base}/board/athletes/{a['id']}")
                assert "Medical flag" in page.inner_text("aside.cautions")
                assert "physician" in page.inner_text("aside.cautions")
            run.check("an athlete's medical flag is shown as a caution on their page", cautions)

            def session():
                fuel, _ = api.get(f"/v1/sessions/{match['id']}/fuel")
                page.goto(f"{base}/board/sessions/{match['id']}")
                assert page.locator("svg[aria-labelledby^=share]").count() == 1
                assert page.locator("svg[aria-labelledby^=rate]").count() == 1
                for a in fuel["athletes"]:
                    if a["fuel"]:
                        row = page.locator(f"tr[data-athlete='{a['athlete_id']}']")
                        assert row.locator("[data-field=gross_energy_kcal]").inner_text() == one(a["fuel"]["gross_energy_kcal"], 0)
                        assert row.locator("[data-field=carbohydrate_g]").inner_text() == one(a["fuel"]["carbohydrate_g"], 0)
                shot(page, "session")
                axe_check(page, "session", serious)
            run.check("session fuel mix and each athlete's energy and carbohydrate match the API", session)

            def move():
                before, _ = api.get(f"/v1/teams/{team}/plan/summary")
                page.goto(f"{base}/board/sessions/{training['id']}")
                page.click("summary:text('Move this session')")
                page.fill("input[name=start_time]", "17:45")
                page.click("button:text('Move session')")
                page.wait_for_load_state("load")
                assert "/changes" in page.url, page.url
                assert "was saved" in page.inner_text(".notice")
                assert page.locator("table.changes tbody tr").count() > 0, "the plan changed"
                stored, _ = api.get(f"/v1/sessions/{training['id']}")
                assert stored["start_time"] == "17:45", stored
                after, _ = api.get(f"/v1/teams/{team}/plan/summary")
                assert after["version"] > before["version"]
                shot(page, "plan-changes")
                axe_check(page, "plan-changes", serious)
            run.check("moving a session shows what changed in the plan", move)

            def conflict():
                page.goto(f"{base}/board/sessions/{training['id']}")
                page.click("summary:text('Move this session')")
                page.fill("input[name=start_time]", "18:15")
                # Someone else moves it meanwhile.
                _, headers, _ = api.call("GET", f"/v1/sessions/{training['id']}")
                status, _, _ = api.call("PATCH", f"/v1/sessions/{training['id']}", {"start_time": "08:00"}, {"If-Match": headers["etag"]})
                assert status == 200
                with page.expect_navigation() as nav:
                    page.click("button:text('Move session')")
                assert nav.value.status == 412, nav.value.status
                assert "Someone else changed this session" in page.inner_text(".notice")
                assert page.input_value("input[name=start_time]") == "18:15", "the typed value is kept"
                stored, _ = api.get(f"/v1/sessions/{training['id']}")
                assert stored["start_time"] == "08:00", "the other edit is kept"
                shot(page, "conflict")
                page.click("button:text('Move session')")
                page.wait_for_load_state("load")
                assert "/changes" in page.url
                stored, _ = api.get(f"/v1/sessions/{training['id']}")
                assert stored["start_time"] == "18:15"
            run.check("a conflicting edit answers 412, keeps both edits' values, and can be reapplied", conflict)

            def pin():
                row = summary["rows"][3]
                aid, date = row["athlete_id"], row["date"]
                page.goto(f"{base}/board/athletes/{aid}#d-{date}")
                sec = page.locator(f"section#d-{date}")
                sec.locator("summary:has-text('Pin this day')").click()
                sec.locator("input[name=carbohydrate_g_per_kg]").fill("abc")
                sec.locator("button:text('Set pin')").click()
                page.wait_for_load_state("load")
                assert "not a number" in page.inner_text(".notice.error")
                sec = page.locator(f"section#d-{date}")
                sec.locator("input[name=carbohydrate_g_per_kg]").fill("25")
                sec.locator("button:text('Set pin')").click()
                page.wait_for_load_state("load")
                assert "carbohydrate" in page.inner_text(".notice.error").lower(), "API range check is shown"
                sec = page.locator(f"section#d-{date}")
                sec.locator("input[name=carbohydrate_g_per_kg]").fill("7.5")
                sec.locator("button:text('Set pin')").click()
                page.wait_for_load_state("load")
                assert "/changes" in page.url
                assert "carbohydrate g per kg" in page.inner_text("table.changes")
                pins, _ = api.get(f"/v1/athletes/{aid}/pins?from={date}&to={date}")
                assert pins["items"][0]["carbohydrate_g_per_kg"] == 7.5
                page.goto(f"{base}/board/athletes/{aid}#d-{date}")
                sec = page.locator(f"section#d-{date}")
                sec.locator("summary:has-text('Pin this day')").click()
                sec.locator("button:text('Clear pin')").click()
                page.wait_for_load_state("load")
                assert "/changes" in page.url
                pins, _ = api.get(f"/v1/athletes/{aid}/pins?from={date}&to={date}")
                assert pins["items"] == []
            run.check("a day pin is set (bad values refused with a message) and cleared", pin)

            def minutes():
                fuel, _ = api.get(f"/v1/sessions/{match['id']}/fuel")
                a = next(x for x in fuel["athletes"] if x["takes_part"] == "full")
                page.goto(f"{base}/board/sessions/{match['id']}")
                page.fill(f"#m-{a['athlete_id']}", "30")
                page.select_option(f"#p-{a['athlete_id']}", "until_end")
                page.locator(f"tr[data-athlete='{a['athlete_id']}'] button").click()
                page.wait_for_load_state("load")
                assert "/changes" in page.url
                status, _, p = api.call("GET", f"/v1/sessions/{match['id']}/participation/{a['athlete_id']}")
                assert status == 200 and p["mode"] == "shortened" and p["minutes"] == 30, p
            run.check("minutes played are recorded from the session page", minutes)

            def kitchen():
                date = match["local_date"]
                page.goto(f"{base}/board/teams/{team}/kitchen?date={date}")
                assert page.locator("section.sheet").count() >= 4
                shot(page, "kitchen-sheet")
                axe_check(page, "kitchen-sheet", serious)
                pdf = Path(tmp.name) / "kitchen.pdf"
                page.pdf(path=str(pdf), format="A4", print_background=True)
                reader_ = PdfReader(str(pdf))
                text = " ".join(" ".join(p.extract_text() for p in reader_.pages).split())
                assert len(reader_.pages) >= 4, len(reader_.pages)
                # Athlete rows from the summary CSV, squad totals from their own
                # sheet; columns are named as the JSON fields.
                status, _, body = api.call("GET", f"/v1/teams/{team}/plan/summary.csv")
                rows = [r for r in csv.DictReader(io.StringIO(body.decode())) if r["date"] == date]
                assert len(rows) == len(athletes), (len(rows), len(athletes))
                for r in rows:
                    name = r["display_name"]
                    assert name in text, f"{name} not in the printed sheet"
                    cell = page.locator(f"section.totals tr[data-athlete='{r['athlete_id']}'] [data-field=carbohydrate_g]")
                    assert float(cell.inner_text()) == float(r["carbohydrate_g"]), (name, cell.inner_text(), r["carbohydrate_g"])
                status, _, body = api.call("GET", f"/v1/teams/{team}/plan/totals.csv")
                total = next(r for r in csv.DictReader(io.StringIO(body.decode())) if r["date"] == date)
                assert int(total["athletes"]) == len(athletes), total
                assert one(float(total["carbohydrate_g"]), 1) in page.inner_text("section.totals tfoot")
                # Look at the first printed page as a picture, for review.
                if shutil.which("pdftoppm"):
                    subprocess.run(["pdftoppm", "-png", "-r", "60", "-f", "1", "-l", "1", str(pdf), str(SHOTS / "kitchen-print")], check=False)
            run.check("the kitchen sheet prints to A4 PDF with the squad's rows and the CSV's figures", kitchen)

            def csrf():
                session_url = f"{base}/board/sessions/{training['id']}/move"
                r = page.request.post(session_url, form={"local_date": training["local_date"], "start_time": "06:00", "csrf": "x" * 64})
                assert r.status == 403, r.status
                r = page.request.post(session_url, form={"local_date": training["local_date"], "start_time": "06:00"}, headers={"Origin": "https://elsewhere.invalid"})
                assert r.status == 403, r.status
                stored, _ = api.get(f"/v1/sessions/{training['id']}")
                assert stored["start_time"] == "18:15", "nothing changed"
            run.check("posts without the session's CSRF token or from another origin are refused", csrf)

            def sign_out():
                old = [c for c in ctx.cookies()]
                page.goto(f"{base}/board/teams/{team}")
                page.click("button:text('Sign out')")
                page.wait_for_load_state("load")
                assert "/board/sign-in" in page.url
                # The old cookie no longer works: the session was ended on the server.
                other = browser.new_context()
                other.add_cookies(old)
                p2 = other.new_page()
                p2.goto(f"{base}/board/teams/{team}")
                assert "/board/sign-in" in p2.url, p2.url
                other.close()
                status, _, _ = api.call("GET", "/v1/teams")
                assert status == 200, "API bearer tokens keep working"
            run.check("sign-out ends the session on the server; bearer tokens still work", sign_out)

            def read_only():
                rctx = browser.new_context(viewport={"width": 1366, "height": 900})
                rp = rctx.new_page()
                watch(rp, run.console)
                sign_in(rp, base, reader)
                rp.goto(f"{base}/board/sessions/{training['id']}")
                assert rp.locator("form[action$='/move']").count() == 0, "no move form for a reader"
                assert rp.locator("form[action*='/minutes/']").count() == 0
                csrf_token = rp.input_value("input[name=csrf]")  # the sign-out form's
                r = rp.request.post(f"{base}/board/sessions/{training['id']}/move", form={"local_date": training["local_date"], "start_time": "06:00", "version": "1", "csrf": csrf_token})
                assert r.status == 403, r.status
                stored, _ = api.get(f"/v1/sessions/{training['id']}")
                assert stored["start_time"] == "18:15"
                rp.goto(f"{base}/board/athletes/{summary['rows'][0]['athlete_id']}")
                assert rp.locator("form[action*='/pins/']").count() == 0
                rctx.close()
            run.check("a reader token sees the board but cannot change anything", read_only)

            def clean_console():
                assert not run.console, "\n".join(run.console)
            run.check("no console errors on any page", clean_console)

            def accessible():
                assert not serious, "\n".join(serious)
            run.check("axe-core finds no serious or critical violations", accessible)
            browser.close()
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
    print(f"screenshots: {SHOTS}")
    print(f"board: {run.passed} passed, {run.failed} failed")
    return 0 if run.failed == 0 and run.passed > 0 else 1


if __name__ == "__main__":
    sys.exit(main())
