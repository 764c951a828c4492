#!/usr/bin/env python3
"""Re-run the example commands shown in README.md and replace their output.

Every fenced block whose first line is `$ lampwright ...` is re-run from the repository root with
build/lampwright (standard output only). Blocks that say "(excerpt)" are left alone; the output of
`qc` is cut to its header, its failed lamps and the lot statistics.
Usage: tools/update_readme_examples.py [path/to/lampwright]
"""
import os
import re
import shlex
import subprocess
import sys

root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
exe = sys.argv[1] if len(sys.argv) > 1 else os.path.join(root, "build", "lampwright")


def qc_excerpt(lines):
    head = lines[:10]
    fails = [l for l in lines[10:] if " FAIL " in l]
    stats = next(i for i, l in enumerate(lines) if l.strip().startswith("lot statistics"))
    return head + ["  ..."] + fails + ["  ...", ""] + lines[stats:]


def run(first):
    args = shlex.split(first[2:])
    out = subprocess.run([exe] + args[1:], cwd=root, capture_output=True, text=True).stdout.rstrip("\n").split("\n")
    return qc_excerpt(out) if args[1] == "qc" else out


path = os.path.join(root, "README.md")
lines = open(path).read().split("\n")
result, i = [], 0
while i < len(lines):
    line = lines[i]
    result.append(line)
    i += 1
    if not line.startswith("```"):
        continue
    body = []
    while i < len(lines) and not lines[i].startswith("```"):
        body.append(lines[i])
        i += 1
    if line == "```" and body and body[0].startswith("$ lampwright ") and not any("(excerpt)" in b for b in body):
        # The command may go on over lines ending in a backslash.
        n = 1
        while n < len(body) and body[n - 1].endswith("\\"):
            n += 1
        command = " ".join(b.rstrip("\\").strip() for b in body[:n])
        body = body[:n] + [l.rstrip() for l in run(command)]
    result.extend(body)
    if i < len(lines):
        result.append(lines[i])
        i += 1
text = "\n".join(result)
changed = text != open(path).read()
open(path, "w").write(text)
print("README.md examples refreshed" if changed else "README.md examples unchanged")
