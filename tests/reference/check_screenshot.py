#!/usr/bin/env python3
"""Describe a screenshot (PNG) with Pillow (installed with PyPI rdkit): size,
share of pixels that are not near-white, number of distinct colours.

Usage: check_screenshot.py FILE.png

Prints one JSON object: {"width": W, "height": H, "ink": share, "colours": N}.
"""
import json
import sys

from PIL import Image

im = Image.open(sys.argv[1]).convert("RGB")
w, h = im.size
px = im.getdata()
ink = sum(1 for r, g, b in px if r < 235 or g < 235 or b < 235)
colours = len(set(px))
print(json.dumps({"width": w, "height": h, "ink": ink / (w * h), "colours": colours}))
