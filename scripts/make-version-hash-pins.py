#!/usr/bin/env python3
"""Pinned SHA-256 of one registry version per hashed-layout version, computed independently of nkledger
with Python's json and hashlib (the layout as written in DEVELOPERS.md "Canonical serialization and
hashing"; VERSION_HASH_LAYOUT in src/registry/records.ts names the one in force).

A pin is never edited: a stored version keeps the hash it was given, so a change to what is hashed is a
new layout with a new pin beside the old ones. The script adds missing pins and exits 1 if an existing
pin would change. Numbers are chosen so Python's repr and JavaScript's Number#toString agree.
Writes test/reference/version-hash-pins.json.  Run: python3 scripts/make-version-hash-pins.py"""
import hashlib
import json
import pathlib
import sys

# Invented example data (Marrowick Optics), not a measurement.
TABLE = {
    "wavelengthNm": [400, 500, 600, 700],
    "n": [1.4701, 1.4652, 1.4623, 1.4605],
    "k": [0.0012, 0.0003, 0.0001, 0],
    "sigmaN": [0.0005, 0.0004, 0.0004, 0.0005],
    "sigmaK": [0.0002, 0.0002, 0.0002, 0.0002],
}
PROVENANCE = {
    "sample": "MW-0417 slide 3",
    "substrate": "fused silica",
    "process": "e-beam, 2 Å/s, 180 °C",
    "instrument": "Marrowick bench ellipsometer",
    "method": "spectroscopic-ellipsometry",
    "angles_deg": [55, 65, 75],
    "measured_on": "2026-03-14",
    "operator": "j.okafor",
    "source_file": "mw-0417-s3.csv",
    "source_sha256": "9f2c4e7a1b3d5f60718293a4b5c6d7e8f9012345678901234567890abcdef123",
    "notes": "after 1 h anneal; \"edge\" region excluded",
}


def layout_1():
    """Layout 1: {content: {table, fit, kk}, provenance: {all eleven fields, null when unknown}}."""
    doc = {"content": {"table": TABLE, "fit": None, "kk": None}, "provenance": PROVENANCE}
    return "{content: {table, fit, kk}, provenance: {sample, substrate, process, instrument, method, angles_deg, measured_on, operator, source_file, source_sha256, notes}}", doc


LAYOUTS = {"1": layout_1}


def main():
    path = pathlib.Path(__file__).resolve().parent.parent / "test" / "reference" / "version-hash-pins.json"
    old = json.loads(path.read_text(encoding="utf-8")) if path.exists() else {"pins": {}}
    pins = dict(old["pins"])
    for layout, build in LAYOUTS.items():
        description, doc = build()
        text = json.dumps(doc, sort_keys=True, separators=(",", ":"), ensure_ascii=False)
        pin = {"layout": description, "table": doc["content"]["table"], "provenance": doc["provenance"],
               "sha256": hashlib.sha256(text.encode("utf-8")).hexdigest()}
        if layout in pins and pins[layout] != pin:
            sys.exit(f"layout {layout}: the pin would change; pins are never edited (add a new layout instead)")
        pins[layout] = pin
    out = {
        "_source": f"Python {sys.version.split()[0]} json.dumps(sort_keys=True, separators=(',', ':'), ensure_ascii=False) + hashlib.sha256; scripts/make-version-hash-pins.py",
        "pins": pins,
    }
    path.write_text(json.dumps(out, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
    print(f"wrote {path}")


if __name__ == "__main__":
    main()
