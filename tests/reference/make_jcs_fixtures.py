#!/usr/bin/env python3
"""RFC 8785 fixtures for forebear's canonical JSON and result digest, computed by an independent
implementation of the JSON Canonicalization Scheme (the `rfc8785` package on PyPI, pure Python).

Run from the project root:  pip install rfc8785==0.1.4 && python3 tests/reference/make_jcs_fixtures.py
Reads every tests/reference/jcs/*.json (cases.json: hand-picked values, among them the number
samples of RFC 8785 section 3.2.2; result-N.json: result.json files written by forebear for six small
data sets) and writes tests/reference/jcs_rfc8785.json: for each input, the SHA-256 of its RFC 8785
canonical text, the text itself when short, and for result files the result digest recomputed here
from the rule stated in docs/digest.md (remove the excluded members, canonicalise, SHA-256). The Rust
test (tests/canonical_json.rs) compares forebear's canonical text and digest with these values and
never runs Python.
"""
import hashlib
import importlib.metadata
import json
import pathlib

import rfc8785

HERE = pathlib.Path(__file__).resolve().parent
# The members of result.json outside the result digest (docs/digest.md), as JSON pointers.
EXCLUSIONS = ["/run", "/digest", "/data/file", "/data/sha256", "/data/size_bytes", "/data/format",
              "/data/sheet", "/tool/version", "/tool/build"]


def remove(tree, pointer):
    *path, last = pointer.lstrip("/").split("/")
    for key in path:
        tree = tree.get(key, {})
    tree.pop(last, None)


def result_digest(tree):
    for pointer in EXCLUSIONS:
        remove(tree, pointer)
    return hashlib.sha256(rfc8785.dumps(tree)).hexdigest()


def sorted_keys_digest(tree):
    """The digest Python's own sorted-keys JSON would give: shown for comparison only."""
    for pointer in EXCLUSIONS:
        remove(tree, pointer)
    text = json.dumps(tree, sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    return hashlib.sha256(text.encode()).hexdigest()


def main():
    entries = []
    agree_sorted = 0
    for path in sorted((HERE / "jcs").glob("*.json")):
        tree = json.loads(path.read_text(encoding="utf-8"))
        text = rfc8785.dumps(tree)
        entry = {"file": f"jcs/{path.name}", "canonical_sha256": hashlib.sha256(text).hexdigest()}
        if len(text) <= 4000:
            entry["canonical"] = text.decode("utf-8")
        if path.name.startswith("result-"):
            entry["digest"] = result_digest(json.loads(path.read_text(encoding="utf-8")))
            recorded = tree["digest"]
            entry["recorded_digest_matches"] = entry["digest"] == recorded
            same = sorted_keys_digest(json.loads(path.read_text(encoding="utf-8"))) == recorded
            agree_sorted += same
        entries.append(entry)
    results = sum(1 for e in entries if "digest" in e)
    out = {
        "generator": f"rfc8785 {importlib.metadata.version('rfc8785')} (PyPI), Python json module",
        "exclusions": EXCLUSIONS,
        "entries": entries,
        "python_sorted_keys_json_reproduces": f"{agree_sorted} of {results} result digests",
    }
    (HERE / "jcs_rfc8785.json").write_text(json.dumps(out, indent=1, ensure_ascii=False) + "\n", encoding="utf-8")
    print(out["python_sorted_keys_json_reproduces"], "with sorted-keys JSON;",
          sum(e.get("recorded_digest_matches", False) for e in entries), "of", results, "with RFC 8785")


if __name__ == "__main__":
    main()
