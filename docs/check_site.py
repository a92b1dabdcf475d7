"""Check the built documentation site in a real headless browser (Debian's chromium).

    python docs/check_site.py [build/docs/html] [--screenshots DIR]

Serves the site on 127.0.0.1 (a port of its own), drives /usr/bin/chromium through
/usr/bin/chromedriver (Selenium) and checks that

- every page of the site loads without a console error (the browser's own log),
- every internal link (href or src) resolves to a file the server has,
- the site search finds a model id (``klaassen-1992``) and links its quantity page,
- the quantity page of the mobility shows its comparison plot (the image loaded);

then saves a screenshot of that page (and of the search results) and prints their
paths and sizes for the reader of the run's output to inspect. Exits 1 on any problem,
2 when the browser cannot be started (never a silent skip).
"""

from __future__ import annotations

import argparse
import functools
import http.server
import sys
import tempfile
import threading
import time
from pathlib import Path
from urllib.parse import unquote, urljoin, urlparse

DOCS = Path(__file__).resolve().parent
CHROMIUM = "/usr/bin/chromium"
CHROMEDRIVER = "/usr/bin/chromedriver"
FLAGS = (
    "--headless=new",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--disable-dev-shm-usage",
    "--window-size=1280,1600",
)
MODEL_ID = "klaassen-1992"
QUANTITY_PAGE = "generated/quantities/mobility.html"


class _Quiet(http.server.SimpleHTTPRequestHandler):
    def log_message(self, *args):  # keep the run's output for the findings
        pass


def serve(root: Path):
    handler = functools.partial(_Quiet, directory=str(root))
    server = http.server.ThreadingHTTPServer(("127.0.0.1", 0), handler)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    return server, f"http://127.0.0.1:{server.server_address[1]}/"


def browser(profile: str):
    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service

    options = webdriver.ChromeOptions()
    options.binary_location = CHROMIUM
    for flag in FLAGS:
        options.add_argument(flag)
    options.add_argument(f"--user-data-dir={profile}")
    options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    return webdriver.Chrome(service=Service(CHROMEDRIVER), options=options)


def console_errors(driver) -> list[str]:
    return [
        entry["message"] for entry in driver.get_log("browser") if entry.get("level") == "SEVERE"
    ]


def links(driver) -> list[str]:
    return driver.execute_script(
        "return Array.from(document.querySelectorAll('a[href], img[src], link[href], "
        "script[src]')).map(e => e.href || e.src)"
    )


def local_file(root: Path, base: str, url: str) -> Path | None:
    """The file a same-site URL points to (None for another site)."""
    if not url.startswith(base):
        return None
    path = unquote(urlparse(url).path).lstrip("/")
    target = root / path
    if target.is_dir():
        target = target / "index.html"
    return target


def check(root: Path, shots: Path) -> list[str]:
    from selenium.webdriver.common.by import By
    from selenium.webdriver.support import expected_conditions as ready
    from selenium.webdriver.support.ui import WebDriverWait

    problems = []
    server, base = serve(root)
    with tempfile.TemporaryDirectory(prefix="matprops-chromium-") as profile:
        try:
            driver = browser(profile)
        except Exception as exc:
            print(f"check_site: the browser did not start: {exc}", file=sys.stderr)
            server.shutdown()
            raise SystemExit(2) from exc
        try:
            pages = sorted(p.relative_to(root).as_posix() for p in root.rglob("*.html"))
            pages = [p for p in pages if not p.startswith("_")]
            checked_links = set()
            for page in pages:
                driver.get(urljoin(base, page))
                WebDriverWait(driver, 20).until(
                    lambda d: d.execute_script("return document.readyState") == "complete"
                )
                for message in console_errors(driver):
                    problems.append(f"{page}: console error: {message}")
                for url in links(driver):
                    url = url.split("#")[0]
                    if url in checked_links:
                        continue
                    checked_links.add(url)
                    target = local_file(root, base, url)
                    if target is not None and not target.exists():
                        problems.append(f"{page}: link to {url} does not resolve")
            print(f"check_site: {len(pages)} pages loaded, {len(checked_links)} links checked")
            # search finds a model id and links its quantity's page
            driver.get(urljoin(base, f"search.html?q={MODEL_ID}"))
            try:
                WebDriverWait(driver, 30).until(
                    ready.presence_of_element_located((By.CSS_SELECTOR, "ul.search li a"))
                )
                found = [
                    a.get_attribute("href")
                    for a in driver.find_elements(By.CSS_SELECTOR, "ul.search li a")
                ]
            except Exception:
                found = []
            if not any("quantities/mobility.html" in (href or "") for href in found):
                problems.append(f"search for {MODEL_ID!r} does not list the mobility page: {found}")
            else:
                print(
                    f"check_site: search for {MODEL_ID!r} lists {len(found)} pages, "
                    "the mobility page among them"
                )
            shots.mkdir(parents=True, exist_ok=True)
            driver.save_screenshot(str(shots / "search.png"))
            for message in console_errors(driver):
                problems.append(f"search.html: console error: {message}")
            # the quantity page: its plot loaded, then a screenshot of the page
            driver.get(urljoin(base, QUANTITY_PAGE))
            images = driver.execute_script(
                "return Array.from(document.images).map(i => [i.src, i.complete, i.naturalWidth])"
            )
            plots = [i for i in images if i[0].endswith("mobility.png")]
            if not plots or not all(done and width > 0 for _, done, width in plots):
                problems.append(f"{QUANTITY_PAGE}: the comparison plot did not load: {images}")
            height = driver.execute_script("return document.body.scrollHeight")
            driver.set_window_size(1280, min(max(height, 900), 3000))
            time.sleep(0.3)
            path = shots / "quantity-mobility.png"
            driver.save_screenshot(str(path))
            from PIL import Image

            for shot in sorted(shots.glob("*.png")):
                with Image.open(shot) as image:
                    print(f"check_site: screenshot {shot} ({image.size[0]}x{image.size[1]} px)")
        finally:
            driver.quit()
            server.shutdown()
    return problems


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description="check the built site in headless chromium")
    parser.add_argument("site", nargs="?", default=str(DOCS.parent / "build" / "docs" / "html"))
    parser.add_argument(
        "--screenshots", default=str(DOCS.parent / "build" / "docs" / "screenshots")
    )
    args = parser.parse_args(argv)
    root = Path(args.site)
    if not (root / "index.html").is_file():
        print(f"check_site: no built site at {root} (python docs/build.py)", file=sys.stderr)
        return 1
    for program in (CHROMIUM, CHROMEDRIVER):
        if not Path(program).exists():
            print(
                f"check_site: {program} is missing: apt-get install -y chromium chromium-driver",
                file=sys.stderr,
            )
            return 2
    problems = check(root, Path(args.screenshots))
    for problem in problems:
        print(f"check_site: PROBLEM {problem}", file=sys.stderr)
    print(f"check_site: {'FAILED' if problems else 'passed'} ({len(problems)} problems)")
    return 1 if problems else 0


if __name__ == "__main__":
    raise SystemExit(main())
