#!/usr/bin/env python3
"""The HTML report in a real browser (headless Chromium, Debian package
`chromium`; screenshots decoded by a small PNG reader below).

For a report on the shipped examples:
  - the file is self-contained: no script, no external reference;
  - Chromium loads it from a file:// URL with no console message of level
    warning or error (--enable-logging=stderr prints them as CONSOLE lines);
  - the DOM Chromium builds (--dump-dom) holds every plot the file holds,
    as SVG, with its waveform, rating and limit lines;
  - a desktop and a phone-width screenshot show the plot colours: the
    waveform stroke (#137a5a) and the rating line (#8e24aa), colours used for nothing else, are painted.
    A report whose plots were hidden, empty or off-screen fails here.
Under CI (the CI variable set) a missing browser is a failure, elsewhere a
visible skip. Ends with "html: N passed, N failed".
"""
import os
import re
import shutil
import struct
import subprocess
import sys
import tempfile
import zlib

BIN = os.environ.get("HEADROOM", "build/headroom")
ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
passed = failed = 0


def check(name, ok, detail=""):
    global passed, failed
    if ok:
        passed += 1
    else:
        failed += 1
        print(f"html: FAIL {name} {detail}")


def browser():
    for b in ("chromium", "chromium-browser"):
        p = shutil.which(b)
        if p:
            return p
    return None


def run_browser(exe, args, url):
    cmd = [exe, "--headless", "--no-sandbox", "--disable-gpu",
           "--no-first-run", "--disable-extensions",
           "--enable-logging=stderr", "--v=0"] + args + [url]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=120)


def png_rows(path):
    """Decodes an 8-bit RGB or RGBA non-interlaced PNG (what Chromium
    writes) with the standard library: PNG specification, filter types
    0-4 (W3C PNG 2nd edition, section 9)."""
    data = open(path, "rb").read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n", "not a PNG"
    pos, idat = 8, b""
    while pos < len(data):
        n = struct.unpack(">I", data[pos:pos + 4])[0]
        kind, chunk = data[pos + 4:pos + 8], data[pos + 8:pos + 8 + n]
        if kind == b"IHDR":
            w, h, depth, ctype, _, _, interlace = struct.unpack(">IIBBBBB", chunk)
        elif kind == b"IDAT":
            idat += chunk
        pos += 12 + n
    assert depth == 8 and ctype in (2, 6) and interlace == 0, "unsupported PNG"
    bpp = 3 if ctype == 2 else 4
    raw, stride = zlib.decompress(idat), w * bpp
    prev = bytearray(stride)
    for y in range(h):
        f = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if f == 1:
                line[i] = (line[i] + a) & 255
            elif f == 2:
                line[i] = (line[i] + b) & 255
            elif f == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif f == 4:
                pa, pb, pc = abs(b - c), abs(a - c), abs(a + b - 2 * c)
                pr = a if pa <= pb and pa <= pc else (b if pb <= pc else c)
                line[i] = (line[i] + pr) & 255
        yield line, bpp
        prev = line


def colour_pixels(png, rgb, tol=40):
    n = 0
    for line, bpp in png_rows(png):
        for i in range(0, len(line), bpp):
            if (abs(line[i] - rgb[0]) <= tol and abs(line[i + 1] - rgb[1]) <= tol
                    and abs(line[i + 2] - rgb[2]) <= tol):
                n += 1
    return n


def main():
    exe = browser()
    if not exe:
        if os.environ.get("CI"):
            print("html: FAIL chromium not installed (required under CI; scripts/deps.sh installs it)")
            return 1
        print("html: SKIP chromium not installed; run scripts/deps.sh")
        return 0
    tmp = tempfile.mkdtemp()
    try:
        return body(exe, tmp)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


def body(exe, tmp):
    page = os.path.join(tmp, "report.html")
    r = subprocess.run([BIN, "check", "--format", "html", "--fail-on", "never",
                        "--parts", "examples/parts.csv", "-o", page, "examples"],
                       cwd=ROOT, capture_output=True, text=True)
    check("report written", r.returncode == 0 and os.path.exists(page), r.stderr)
    if not os.path.exists(page):
        return 1
    html = open(page, encoding="utf-8").read()
    check("no script", "<script" not in html.lower())
    check("no external reference",
          not re.search(r'(src|href)\s*=\s*"(https?:)?//', html, re.I))
    plots = html.count('<svg class="plot"')
    waves = html.count('class="wave"')
    check("plots written", plots >= 6 and waves == plots, f"{plots} plots, {waves} waves")
    check("summary written", 'id="summary"' in html)

    url = "file://" + page
    r = run_browser(exe, ["--dump-dom"], url)
    dom = r.stdout
    console = [l for l in r.stderr.splitlines() if "CONSOLE" in l]
    check("loads without console messages", r.returncode == 0 and not console,
          "\n".join(console[:5]))
    in_dom = dom.count('class="plot"')
    check("DOM holds every plot", in_dom == plots, f"{in_dom} of {plots}")
    check("DOM holds the waveforms", dom.count("<polyline") >= waves)
    check("DOM holds rating lines", "rating</text>" in dom)
    check("DOM holds the findings table", dom.count("<tr>") > 5)

    # A short report (one design) so that a screenshot holds its plots.
    short = os.path.join(tmp, "ladder.html")
    subprocess.run([BIN, "check", "--format", "html", "--fail-on", "never",
                    "--parts", "examples/parts.csv", "-o", short,
                    "examples/mains_doubler.cir"], cwd=ROOT, capture_output=True)
    for name, size in (("desktop", "1280,6000"), ("phone", "390,16000")):
        shot = os.path.join(tmp, name + ".png")
        r = run_browser(exe, ["--screenshot=" + shot, "--window-size=" + size,
                              "--hide-scrollbars"], "file://" + short)
        ok = r.returncode == 0 and os.path.exists(shot)
        check(f"{name} screenshot taken", ok, r.stderr[-400:])
        if not ok:
            continue
        wave = colour_pixels(shot, (0x13, 0x7a, 0x5a), 24)
        rating = colour_pixels(shot, (0x8e, 0x24, 0xaa), 24)
        print(f"html: {name} screenshot: {wave} waveform pixels, {rating} rating-line pixels")
        check(f"{name} waveforms visible", wave > 500, f"{wave} pixels")
        check(f"{name} rating lines visible", rating > 100, f"{rating} pixels")
    print(f"html: {passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
