#!/usr/bin/env python3
"""Reference hashes for nkledger's canonical JSON (src/registry/canonical.ts), computed independently
with Python's json and hashlib: keys sorted, no whitespace, SHA-256 of the UTF-8 text.
Numbers are chosen so Python's repr and JavaScript's Number#toString agree (no exponent forms, no 0.0);
the exponent forms are checked in the test against ECMA-262 Number::toString instead.
Writes test/reference/canonical-hash.json.  Run: python3 scripts/make-canonical-hash-fixture.py"""
import hashlib
import json
import pathlib
import sys

cases = [
    {"name": "nested object, unsorted keys", "value": {"b": [3, 1.5, -2.25], "a": {"z": None, "y": True, "x": "n,k"}}},
    {"name": "table-like content", "value": {"content": {"table": {"wavelengthNm": [400, 450.5, 500], "n": [1.4701, 1.4652, 1.4623], "k": [0.0012, 0.0003, 0.0001]}, "fit": None, "kk": None},
                                            "provenance": {"sample": "W7", "method": "spectroscopic-ellipsometry", "angles_deg": [65, 70, 75], "notes": None}}},
    {"name": "unicode strings and escapes", "value": {"name": "ε₂ of MgF₂ — \"évaporé\"\n", "tags": ["Å", "µm"]}},
]
out = {
    "_source": f"Python {sys.version.split()[0]} json.dumps(sort_keys=True, separators=(',', ':'), ensure_ascii=False) + hashlib.sha256; scripts/make-canonical-hash-fixture.py",
    "cases": [],
}
for case in cases:
    text = json.dumps(case["value"], sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    out["cases"].append({"name": case["name"], "value": case["value"], "canonical": text, "sha256": hashlib.sha256(text.encode("utf-8")).hexdigest()})
path = pathlib.Path(__file__).resolve().parent.parent / "test" / "reference" / "canonical-hash.json"
path.write_text(json.dumps(out, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
print(f"wrote {path}")
