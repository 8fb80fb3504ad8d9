"""Checks plot files the way an independent reader would: each SVG must parse
as XML (Python's xml.etree), every embedded raster must decode (Pillow), and
we count the stroked paths by opacity so a test can match them to cycles.
Prints one line per file: name paths=N faint=M images=K decoded=D."""
import base64
import io
import re
import sys
import xml.etree.ElementTree as ET

from PIL import Image

SVG = "{http://www.w3.org/2000/svg}"
XLINK = "{http://www.w3.org/1999/xlink}href"


def main(faint_opacity, files):
    for name in files:
        root = ET.parse(name).getroot()
        if root.tag != SVG + "svg":
            raise SystemExit(f"{name}: root element is {root.tag}, not svg")
        paths = faint = 0
        for p in root.iter(SVG + "path"):
            style = p.get("style", "")
            if "stroke:" not in style or "stroke:none" in style:
                continue
            paths += 1
            m = re.search(r"stroke-opacity:([0-9.]+)", style)
            if m and abs(float(m.group(1)) - faint_opacity) < 1e-6:
                faint += 1
        images = decoded = 0
        for im in root.iter(SVG + "image"):
            images += 1
            href = im.get(XLINK) or im.get("href") or ""
            if href.startswith("data:image/png;base64,"):
                data = base64.b64decode(href.split(",", 1)[1])
                with Image.open(io.BytesIO(data)) as img:
                    img.load()
                    if img.size[0] > 0 and img.size[1] > 0:
                        decoded += 1
        print(f"{name} paths={paths} faint={faint} images={images} decoded={decoded}")


if __name__ == "__main__":
    main(float(sys.argv[1]), sys.argv[2:])
