"""Screenshots of the dashboard's views and of a snapshot for the README.

Run from the checkout with the test extra installed:
    python docs/make_screenshots.py
It serves the default demo on a free loopback port, opens it in headless
Chromium (Debian's /usr/bin/chromium) and writes docs/screenshots/*.png.
"""

from __future__ import annotations

import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).parent
sys.path.insert(0, str(HERE.parent / "tests"))
from browser_support import chromium, open_page, served  # noqa: E402

VIEWS = ("Layout", "Neighbour skies", "Period ladder", "Flux & temperature", "Observability", "Dynamics",
         "Bulk & atmosphere", "Transit planner")


def main() -> None:
    out = HERE / "screenshots"
    out.mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory() as scratch, served(Path(scratch)) as url, chromium() as browser:
        origin = url.rsplit("/", 1)[0]
        with open_page(browser, (origin,), {"width": 1400, "height": 1000}) as (page, _):
            page.goto(url)
            page.wait_for_selector(".bk-Canvas", timeout=60_000)
            for view in VIEWS:
                page.locator(".bk-tab", has_text=view).first.click()
                page.wait_for_selector(".bk-Canvas:visible", timeout=60_000)
                page.wait_for_timeout(2500)
                slug = view.lower().replace(" & ", "_").replace(" ", "_")
                page.screenshot(path=str(out / f"{slug}.png"), full_page=False)
        snapshot = Path(scratch) / "snapshot.html"
        subprocess.run([sys.executable, "-m", "orbitdeck.dashboard.cli", "snapshot", "-o", str(snapshot)], check=True)
        with open_page(browser, (), {"width": 1400, "height": 1000}) as (page, _):
            page.goto(snapshot.as_uri())
            page.wait_for_selector(".bk-Canvas", timeout=60_000)
            page.wait_for_timeout(1500)
            page.screenshot(path=str(out / "snapshot.png"), full_page=False)
    print("wrote", ", ".join(sorted(p.name for p in out.glob("*.png"))))


if __name__ == "__main__":
    main()
