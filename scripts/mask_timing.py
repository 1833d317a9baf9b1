"""Print a postassay output file with its wall-clock figures masked (every
number in them becomes N), for scripts/compare_outputs.sh.

Masked, and nothing else: the Timing section of report.md and report.html
(whole command, build times, query latencies and the build-time chart); the
`timing` values and `micros_per_sentence` of report.json and
diagnostics.json; the CPU time per sentence of language detection (last
column of the routing tables and of diagnostics-routing.csv, and the
"Detection: N µs" lines); the seconds of progress lines on stderr
(`in N s`).

Standard library only: python3 scripts/mask_timing.py FILE
"""

import re
import sys

NUM = re.compile(rb"[0-9]+(\.[0-9]+)?(e-?[0-9]+)?")
JSON_KEYS = re.compile(
    rb'("(total_seconds|build_seconds|query_ms_mean|query_ms_p95|micros_per_sentence)": )'
    rb"[0-9.e+-]+"
)

SVG = re.compile(rb"<svg.*?</svg>")
SECONDS = re.compile(rb"in [0-9]+(\.[0-9]+)? s\b")


def numbers(line):
    return NUM.sub(b"N", line)


def mask(path, data):
    lines = data.split(b"\n")
    out = []
    in_timing = False
    for line in lines:
        if path.endswith(".md"):
            if line.startswith(b"## "):
                in_timing = line.strip() == b"## Timing"
            if in_timing or "µs".encode() in line:
                line = numbers(line)
            elif re.match(rb"\| ud(_pud)? \|", line):
                cells = line.split(b" | ")
                cells[-1] = numbers(cells[-1])
                line = b" | ".join(cells)
        elif path.endswith(".html"):
            if b"<h2" in line:
                in_timing = b"<h2>Timing</h2>" in line
            if in_timing:
                # A chart of build times: its axes follow the figures.
                line = numbers(SVG.sub(b"<svg/>", line))
            elif "µs".encode() in line:
                line = numbers(line)
            elif line.startswith(b"<tr><td>ud"):
                head, _, last = line.rpartition(b"<td")
                line = head + b"<td" + numbers(last)
        elif path.endswith(".json"):
            line = JSON_KEYS.sub(rb"\1N", line)
        elif path.endswith("diagnostics-routing.csv"):
            head, _, last = line.rpartition(b",")
            line = head + b"," + numbers(last) if head else line
        elif path.endswith(".err"):
            line = SECONDS.sub(b"in N s", line)
        out.append(line)
    return b"\n".join(out)


if __name__ == "__main__":
    name = sys.argv[1]
    with open(name, "rb") as f:
        sys.stdout.buffer.write(mask(name, f.read()))
