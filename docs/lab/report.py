#!/usr/bin/env python3
"""Writes the lab's plots (PNG) and its section of docs/benchmarks.md from the lab's results.

Usage: report.py RESULTS_FOLDER   (the folder compare.py wrote G1.json and Parallel.json into)
"""

import io
import json
import re
import struct
import sys
import zlib
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

MIB = 1 << 20
ROOT = Path(__file__).resolve().parents[2]
# One curve function for the driver and the plots: the plan's model as docs/model.md states it.
sys.path.insert(0, str(ROOT / "e2e" / "lab"))
from compare import curve  # noqa: E402
BENCHMARKS = ROOT / "docs" / "benchmarks.md"
BEGIN = "<!-- lab results: written by docs/lab/report.py -->"
END = "<!-- end of lab results -->"

# Palette indices stay below "A" (0x41) and palette channels outside the ASCII letters, and the
# image data is stored uncompressed: compressed bytes spell random words, and a tracked file must
# not spell names the project may not use.
MAX_COLOURS = 64
LETTERS = range(0x41, 0x7B)
# The format's own words, which the check below sees past.
PNG_WORDS = (b"PNG", b"IHDR", b"PLTE", b"IDAT", b"IEND")


def letterless(value):
    return value if value not in LETTERS else (0x40 if value < 0x5E else 0x7B)


def chunk(kind, data):
    return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data))


def save_png(fig, path):
    """Writes fig as a paletted PNG whose bytes hold no run of three ASCII letters."""
    from PIL import Image

    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=100)
    image = Image.open(buffer).convert("RGB").quantize(MAX_COLOURS)
    width, height = image.size
    palette = [letterless(v) for v in image.getpalette()[: 3 * MAX_COLOURS]]
    pixels = bytearray(image.tobytes())
    for attempt in range(256):
        # Nudging one corner pixel changes the checksums, the only bytes left to chance.
        pixels[0] = attempt % MAX_COLOURS
        rows = b"".join(
            b"\0" + bytes(pixels[y * width:(y + 1) * width]) for y in range(height))
        data = (
            b"\x89PNG\r\n\x1a\n"
            + chunk(b"IHDR", struct.pack(">IIBBBBB", width, height, 8, 3, 0, 0, 0))
            + chunk(b"PLTE", bytes(palette))
            + chunk(b"IDAT", zlib.compress(rows, 0))
            + chunk(b"IEND", b""))
        if not letter_runs(data):
            path.write_bytes(data)
            return
    raise SystemExit(f"could not write {path} without letter runs: {letter_runs(data)}")


def letter_runs(data):
    """Runs of three or more ASCII letters, the format's own words left out."""
    for word in PNG_WORDS:
        data = data.replace(word, bytes(len(word)))
    return set(re.findall(rb"[A-Za-z]{3,}", data))


def measured_points(summary, app):
    points = []
    for runs in summary["runs"].values():
        for run in runs:
            for a in run["apps"] if run else []:
                if a["app"] == app:
                    points.append((a["heapBytes"] / MIB, a["gcSecondsPerSecond"]))
    return points


def plot_curves(summary, path):
    entries = summary["plan"]["workloads"]
    fig, axes = plt.subplots(1, len(entries), figsize=(3.2 * len(entries), 3.2), squeeze=False)
    for ax, entry in zip(axes[0], entries):
        points = measured_points(summary, entry["name"])
        # Today's heap from the run itself: the plan's current heap is the first step's.
        today = summary.get("todayMib", {}).get(entry["name"], entry["currentHeapBytes"] / MIB)
        heaps = [h for h, _ in points] + [today, entry["heapBytes"] / MIB]
        low, high = min(heaps) * 0.8, max(heaps) * 1.2
        xs = [low + (high - low) * i / 100 for i in range(101)]
        ax.plot(xs, [curve(entry, x * MIB) for x in xs], color="black", label="model")
        ax.scatter([h for h, _ in points], [g for _, g in points], marker="o", facecolors="none",
                   edgecolors="black", label="measured")
        ax.axvline(today, linestyle=":", color="grey", label="today")
        ax.axvline(entry["heapBytes"] / MIB, linestyle="--", color="black", label="proposal")
        step = summary["splitsMib"].get("first step", {}).get(entry["name"])
        if step is not None:
            ax.axvline(step, linestyle="-.", color="grey", label="first step")
        ax.set_title(entry["name"])
        ax.set_xlabel("heap (MiB)")
        ax.set_ylim(bottom=0)
    axes[0][0].set_ylabel("GC seconds per second")
    axes[0][0].legend(fontsize="small")
    fig.suptitle(f"{summary['collector']}: per-workload GC cost curves")
    fig.tight_layout()
    save_png(fig, path)
    plt.close(fig)


def plot_pool(summaries, path):
    fig, axes = plt.subplots(1, len(summaries), figsize=(5 * len(summaries), 3.4), squeeze=False)
    for ax, summary in zip(axes[0], summaries):
        names = list(summary["poolGcSecondsPerSecond"])
        values = [summary["poolGcSecondsPerSecond"][n] for n in names]
        hatches = ["//" if n == "proposal" else "" for n in names]
        bars = ax.bar(range(len(names)), values, color="white", edgecolor="black")
        for bar, hatch in zip(bars, hatches):
            bar.set_hatch(hatch)
        ax.set_xticks(range(len(names)), names, rotation=40, ha="right", fontsize="small")
        ax.set_ylabel("pool GC seconds per second")
        ax.set_title(f"{summary['collector']}: same total heap, mean of runs")
    fig.tight_layout()
    save_png(fig, path)
    plt.close(fig)


def table(summary):
    lines = [
        "| split | heaps (MiB) | pool GC s/s | vs proposal |",
        "|---|---|---|---|",
    ]
    proposal = summary["poolGcSecondsPerSecond"]["proposal"]
    for name, value in summary["poolGcSecondsPerSecond"].items():
        heaps = ", ".join(f"{a} {int(m)}" for a, m in sorted(summary["splitsMib"][name].items()))
        lines.append(f"| {name} | {heaps} | {value:.4f} | {value / proposal:.2f} |")
    return "\n".join(lines)


def section(summaries):
    out = [BEGIN, "", "## The lab: real applications under G1 and Parallel", ""]
    out.append(
        "`./dev.sh lab` runs five real open-source libraries as paced services (e2e/lab), measures "
        "them with the real Prometheus and plans them (the first step). It rolls the first step "
        "out, measures again and plans with every earlier point as history, as the operator does "
        "after a rollout, and repeats that for each learning step (the last plan is the proposal; "
        "its curves are the ones plotted). Then it runs the fleet again at "
        "the same total heap under each split, every split twice in alternating order. The pool "
        "uses the product's default headroom floor (25 %) and step limit (50 %). Figures from the "
        "project's 2-core build machine with nothing else running: GC pauses are wall time, and any "
        "other work on the machine stretches them (a build running beside an earlier G1 run "
        "spread two rounds of the same split from 0.057 to 0.094 s/s)."
    )
    for s in summaries:
        c = s["collector"]
        out += ["", f"### {c}", "", table(s), ""]
        out.append(
            f"Predicted change of pool GC time (proposal vs today): {s['predictedChange']:+.1%}; "
            f"measured: {s['measuredChange']:+.1%}. Proposal at or below the better of linear rule "
            f"and equal split: {'yes' if s['proposalAtOrBelowBetterRule'] else 'no'}; within 5 % "
            f"of the grid's best: {'yes' if s['proposalWithinGridTolerance'] else 'no'}; "
            f"prediction within 20 % of measurement: "
            f"{'yes' if s['predictionWithinTolerance'] else 'no'}."
        )
        if "firstStepPredictedChange" in s:
            out.append(
                f"The first step, planned from today's heaps alone: predicted "
                f"{s['firstStepPredictedChange']:+.1%}, measured {s['firstStepMeasuredChange']:+.1%}."
            )
        steps = s.get("learningSteps", [])
        if steps:
            out.append(
                "Learning steps (heaps rolled, pool GC s/s measured while learning): "
                + "; ".join(
                    f"{i + 1}: {', '.join(f'{a} {int(m)}' for a, m in sorted(st['heapsMib'].items()))}"
                    f" at {st['poolGcSecondsPerSecond']:.4f}"
                    for i, st in enumerate(steps))
                + "."
            )
        if "measureSeconds" in s:
            out.append(
                f"Each run: {s['warmupSeconds']} s of warm-up, then {s['measureSeconds']} s measured "
                f"(the snapshots' window too).")
        checks = [c for step in s.get("snapshotChecks", []) for c in step["checks"]]
        if checks:
            off = [c for c in checks if not c["agrees"]]
            out.append(
                f"Snapshot against the lab's own figures (Prometheus over the window vs the "
                f"collector MXBeans over the measured phase): {len(checks) - len(off)} of "
                f"{len(checks)} workload measurements agree"
                + ("." if not off else ": " + ", ".join(
                    f"{c['workload']} {c['snapshotGcSecondsPerSecond']:.4f} vs "
                    f"{c['labGcSecondsPerSecond']:.4f}" for c in off) + " did not.")
            )
        out += ["", f"![{c} curves](lab/{c}-curves.png)", ""]
    out += ["![pool GC time per split](lab/pool.png)", "", END]
    return "\n".join(out)


def main():
    results = Path(sys.argv[1])
    summaries = [
        json.loads((results / f"{c}.json").read_text())
        for c in ("G1", "Parallel")
        if (results / f"{c}.json").exists()
    ]
    for s in summaries:
        plot_curves(s, ROOT / "docs" / "lab" / f"{s['collector']}-curves.png")
    plot_pool(summaries, ROOT / "docs" / "lab" / "pool.png")
    text = BENCHMARKS.read_text()
    if BEGIN in text:
        text = text[: text.index(BEGIN)] + section(summaries) + text[text.index(END) + len(END):]
    else:
        text = text.rstrip() + "\n\n" + section(summaries) + "\n"
    BENCHMARKS.write_text(text)


if __name__ == "__main__":
    main()
