"""Screenshots of a calc package as a checker first sees it: the top, a calculation section, the checks.

    python tools/package_screenshots.py PACKAGE.html OUT_DIR [--section N] [--width PX]

writes ``package-top.png`` (title block, cautions, summary), ``package-section.png`` (the start of
calculation section N, 1 unless given) and ``package-checks.png`` (the checks summary) into OUT_DIR,
drawn by Debian's headless chromium through Playwright (the browser tests' set-up). Existing files of
those names in OUT_DIR are replaced only with ``--replace``.
"""

from __future__ import annotations

import argparse
import shutil
import sys
from pathlib import Path

NAMES = ("package-top.png", "package-section.png", "package-checks.png")
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def main(argv: list[str] | None = None) -> int:
    """Draw the three screenshots; 0 when written, 2 with a message when something is missing or in the way."""
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("package", type=Path, help="the exported HTML package")
    ap.add_argument("out", type=Path, help="folder for the three PNG files")
    ap.add_argument("--section", type=int, default=1, help="calculation section to show (default 1)")
    ap.add_argument("--width", type=int, default=1000, help="page width in CSS pixels (default 1000)")
    ap.add_argument("--height", type=int, default=1300, help="height of each screenshot (default 1300)")
    ap.add_argument("--replace", action="store_true", help="replace screenshots already in OUT_DIR")
    args = ap.parse_args(argv)

    if not args.package.is_file():
        print(f"package_screenshots: no such package file: {args.package}", file=sys.stderr)
        return 2
    exe = shutil.which("chromium") or shutil.which("chromium-browser")
    if exe is None:
        print("package_screenshots: Debian's chromium is not installed (apt-get install chromium)", file=sys.stderr)
        return 2
    targets = [args.out / n for n in NAMES]
    existing = [str(t) for t in targets if t.exists()]
    if existing and not args.replace:
        print("package_screenshots: would replace " + ", ".join(existing) + " (add --replace)", file=sys.stderr)
        return 2
    from playwright.sync_api import sync_playwright

    args.out.mkdir(parents=True, exist_ok=True)
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=exe, args=FLAGS)
        page = browser.new_page(viewport={"width": args.width, "height": args.height})
        page.goto(args.package.resolve().as_uri())
        page.wait_for_load_state("load")
        anchors = ("body", f"#sec-{args.section}", "#checks")
        for target, anchor in zip(targets, anchors, strict=True):
            box = page.locator(anchor).first.bounding_box()
            if box is None:
                print(f"package_screenshots: the package has no {anchor}", file=sys.stderr)
                browser.close()
                return 2
            height = min(args.height, box["height"] + 8) if anchor == "#checks" else args.height
            page.screenshot(path=str(target), full_page=True,
                            clip={"x": 0, "y": max(box["y"] - 8, 0), "width": args.width, "height": height})
            print(target)
        browser.close()
    return 0


if __name__ == "__main__":
    sys.exit(main())
