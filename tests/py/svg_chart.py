"""Independent reading of an SVG chart or sketch drawn by the core (a
stabilization chart, a virtual-point geometry), with the Python standard
library's XML parser (xml.etree.ElementTree), which refuses a document that
is not well-formed XML.

Usage: svg_chart.py FILE.svg
Prints one JSON object:
  width, height, title, desc: the root's size, <title> and <desc>;
  background: the fill of the first full-size <rect>;
  texts: every <text> in document order with its fill (inherited from an
    enclosing element when it has none) and its WCAG 2.1 contrast ratio
    against the background, computed here from the definition of relative
    luminance (WCAG 2.1, "relative luminance" and "contrast ratio");
  axes: for each <g data-axis=NAME>, its tick labels as [text, x, y];
  chosen: for each <g data-kind="chosen">, its <line>'s x1, x2 and its text;
  classes: the count of elements with each data-class;
  items: every element with data-kind (besides "chosen") as its attributes,
    its tag, its texts and its first <line> and <circle> (coordinates and
    whether dashed), for the geometry sketches.
"""
import json
import sys
import xml.etree.ElementTree as ET

NS = "{http://www.w3.org/2000/svg}"


def luminance(hex_colour):
    h = hex_colour.lstrip("#")
    if len(h) == 3:
        h = "".join(c * 2 for c in h)
    out = []
    for i in (0, 2, 4):
        c = int(h[i:i + 2], 16) / 255.0
        out.append(c / 12.92 if c <= 0.03928 else ((c + 0.055) / 1.055) ** 2.4)
    return 0.2126 * out[0] + 0.7152 * out[1] + 0.0722 * out[2]


def contrast(a, b):
    la, lb = luminance(a), luminance(b)
    return (max(la, lb) + 0.05) / (min(la, lb) + 0.05)


NAMED = {"white": "#ffffff", "black": "#000000"}


def colour(c):
    return NAMED.get(c, c)


root = ET.parse(sys.argv[1]).getroot()
assert root.tag == NS + "svg", root.tag
width, height = float(root.get("width")), float(root.get("height"))
background = None
for r in root.iter(NS + "rect"):
    w, h = r.get("width"), r.get("height")
    if w in ("100%", str(width), "%g" % width) and h in ("100%", str(height), "%g" % height):
        background = colour(r.get("fill"))
        break
assert background is not None, "no background rect"

parent = {c: p for p in root.iter() for c in p}


def inherited(el, attr):
    while el is not None:
        v = el.get(attr)
        if v is not None:
            return v
        el = parent.get(el)
    return None


def text_of(el):
    return "".join(el.itertext())


texts = []
for t in root.iter(NS + "text"):
    fill = colour(inherited(t, "fill") or "#000000")
    texts.append({
        "text": text_of(t),
        "fill": fill,
        "x": float(t.get("x")),
        "y": float(t.get("y")),
        "contrast": contrast(fill, background),
    })

axes = {}
for g in root.iter(NS + "g"):
    name = g.get("data-axis")
    if name is None:
        continue
    axes[name] = [[text_of(t), float(t.get("x")), float(t.get("y"))]
                  for t in g.iter(NS + "text") if t.get("transform") is None]

chosen = []
classes = {}
items = []
for el in root.iter():
    kind = el.get("data-kind")
    if kind == "chosen":
        line = el.find(NS + "line")
        chosen.append({
            "x1": float(line.get("x1")),
            "x2": float(line.get("x2")),
            "text": " ".join(text_of(t) for t in el.iter(NS + "text")),
        })
    elif kind is not None:
        item = {k: v for k, v in el.attrib.items()}
        item["tag"] = el.tag.replace(NS, "")
        item["texts"] = [text_of(t) for t in el.iter(NS + "text")]
        # the first line and circle inside, with whether they are dashed
        for shape in ("line", "circle"):
            found = el.find(NS + shape)
            if found is not None:
                item[shape] = {k: float(v) for k, v in found.attrib.items()
                               if k in ("x1", "y1", "x2", "y2", "cx", "cy", "r")}
                item[shape]["dashed"] = found.get("stroke-dasharray") is not None
        items.append(item)
    c = el.get("data-class")
    if c is not None:
        classes[c] = classes.get(c, 0) + 1

title = root.find(NS + "title")
desc = root.find(NS + "desc")
print(json.dumps({
    "width": width,
    "height": height,
    "title": None if title is None else text_of(title),
    "desc": None if desc is None else text_of(desc),
    "background": background,
    "texts": texts,
    "axes": axes,
    "chosen": chosen,
    "classes": classes,
    "items": items,
}))
