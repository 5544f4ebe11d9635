"""Independent reading of an SVG drawn by `mortise diagram`, with the Python
standard library's XML parser (xml.etree.ElementTree), which refuses a
document that is not well-formed XML.

Usage: svg_items.py FILE.svg
Prints one JSON object: the root's width and height, the text of every
<text> element in document order, and for every <g> carrying data-kind its
data attributes, its first <rect>'s box and the texts inside it.
"""
import json
import sys
import xml.etree.ElementTree as ET

NS = "{http://www.w3.org/2000/svg}"

root = ET.parse(sys.argv[1]).getroot()
assert root.tag == NS + "svg", root.tag
out = {
    "width": float(root.get("width")),
    "height": float(root.get("height")),
    "texts": ["".join(t.itertext()) for t in root.iter(NS + "text")],
    "items": [],
}
for g in root.iter(NS + "g"):
    if g.get("data-kind") is None:
        continue
    r = g.find(NS + "rect")
    out["items"].append({
        "kind": g.get("data-kind"),
        "id": g.get("data-id"),
        "step": g.get("data-step"),
        "index": None if g.get("data-index") is None else int(g.get("data-index")),
        "box": [float(r.get(k)) for k in ("x", "y", "width", "height")],
        "texts": ["".join(t.itertext()) for t in g.iter(NS + "text")],
    })
print(json.dumps(out))
