#!/usr/bin/env python3
"""Writes the figures of docs/model.md (PNG) from the project's own outputs.

- curve-parts.png: the codec service's curve from the Parallel lab run (docs/lab/Parallel.json),
  split into its heap-independent part Y, its young part a/(youngShare*H) and its old part
  k/(oldShare*H - L - E0).
- equal-marginal-cost.png: the worked example's pool (docs/examples/worked-*.yaml, planned by
  the built jar): each workload's marginal GC cost per byte of heap, with the pool's one level
  where every proposed heap sits.

Usage: model.py   (run by ./dev.sh plots, which builds the jar and the plotting environment)
"""

import json
import subprocess
import sys
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "docs" / "lab"))
from report import save_png  # noqa: E402

MIB = 1 << 20
HERE = Path(__file__).resolve().parent
JAR = ROOT / "operator" / "target" / "heapherd.jar"


def parts(entry, heap_bytes):
    """The heap-independent, young and old parts of a plan entry's curve at heap_bytes (GC s/s)."""
    young = entry["young"]
    young_part = (young["constant"] / (young["share"]["value"] * heap_bytes)
                  if young["constant"] else 0.0)
    headroom = entry["oldShare"]["value"] * heap_bytes - entry["liveBytes"] - entry["offsetBytes"]
    old_part = entry["gcConstant"] / headroom if entry["gcConstant"] and headroom > 0 else 0.0
    return entry["heapIndependentGcSecondsPerSecond"], young_part, old_part


def curve_parts():
    plan = json.loads((ROOT / "docs" / "lab" / "Parallel.json").read_text())["plan"]
    entry = next(w for w in plan["workloads"] if w["name"] == "codec")
    low = (entry["liveBytes"] + entry["offsetBytes"]) / entry["oldShare"]["value"] * 1.15
    high = entry["heapBytes"] * 1.6
    xs = [low + (high - low) * i / 200 for i in range(201)]
    fixed = [parts(entry, x)[0] for x in xs]
    young = [parts(entry, x)[1] for x in xs]
    old = [parts(entry, x)[2] for x in xs]
    fig, ax = plt.subplots(figsize=(6, 3.6))
    mib = [x / MIB for x in xs]
    ax.plot(mib, [f + y + o for f, y, o in zip(fixed, young, old)], color="black", label="total")
    ax.plot(mib, fixed, color="grey", linestyle="-", linewidth=0.8, label="heap-independent part Y")
    ax.plot(mib, young, color="black", linestyle="--", label="young part a/(youngShare H)")
    ax.plot(mib, old, color="black", linestyle=":", label="old part k/(oldShare H - L - E0)")
    ax.axvline(entry["heapBytes"] / MIB, color="grey", linestyle="-.", label="proposal")
    ax.set_xlabel("heap (MiB)")
    ax.set_ylabel("GC seconds per second")
    ax.set_ylim(0, 2.5 * sum(parts(entry, entry["heapBytes"])))
    ax.set_title("codec service under Parallel, lab run")
    ax.legend(fontsize=8)
    fig.tight_layout()
    save_png(fig, HERE / "curve-parts.png")


def equal_marginal_cost():
    plan = json.loads(subprocess.run(
        ["java", "-jar", str(JAR), "plan", "--pool", str(ROOT / "docs/examples/worked-pool.yaml"),
         "--snapshot", str(ROOT / "docs/examples/worked-snapshot.yaml"), "-o", "json"],
        check=True, capture_output=True, text=True).stdout)
    # Old part only (the worked example has no young part): a pod's marginal cost per byte of
    # heap, weighted, is w*k/E^2 with E = H - L - E0; at the optimum it is 1/c^2 for every heap
    # inside its bounds (docs/model.md, "A pool").
    level = 1 / plan["level"] ** 2
    fig, ax = plt.subplots(figsize=(6, 3.6))
    styles = ["-", "--", ":", "-."]
    for entry, style in zip(plan["workloads"], styles):
        floor = entry["liveBytes"] + entry["offsetBytes"]
        xs = [floor * 1.05 + (entry["highHeapBytes"] - floor * 1.05) * i / 200 for i in range(201)]
        ys = [entry["weight"] * entry["gcConstant"] / (x - floor) ** 2 for x in xs]
        ax.plot([x / MIB for x in xs], ys, color="black", linestyle=style, label=entry["name"])
        ax.plot([entry["heapBytes"] / MIB], [level], marker="s", color="black")
    ax.axhline(level, color="grey", label="the pool's level 1/c^2")
    ax.set_yscale("log")
    ax.set_xlabel("heap per pod (MiB)")
    ax.set_ylabel("marginal GC cost per byte (weighted)")
    ax.set_title("worked example: every heap at one marginal cost")
    ax.legend(fontsize=8)
    fig.tight_layout()
    save_png(fig, HERE / "equal-marginal-cost.png")


if __name__ == "__main__":
    curve_parts()
    equal_marginal_cost()
