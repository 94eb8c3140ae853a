"""Plots docs/bench/scale.json (written by ./dev.sh scale) into docs/figures/scale.png."""
import json
import pathlib

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

ROOT = pathlib.Path(__file__).resolve().parents[2]
data = json.loads((ROOT / "docs/bench/scale.json").read_text())
runs = sorted(data["runs"], key=lambda r: r["scale"]["workloads"])
workloads = [r["scale"]["workloads"] for r in runs]
mib = 1024 * 1024

fig, (memory, time) = plt.subplots(1, 2, figsize=(10, 4))
memory.plot(workloads, [r["operatorHeapAfterGcBytes"] / mib for r in runs], "o-", label="heap after GC")
memory.plot(workloads, [r["operatorPeakRssBytes"] / mib for r in runs], "s-", label="peak RSS")
memory.axhline(data["chartMemoryLimitBytes"] / mib, color="grey", linestyle="--", label="chart memory limit")
memory.set_xlabel("workloads (5 pods each)")
memory.set_ylabel("MiB")
memory.set_title("Operator memory")
memory.set_ylim(bottom=0)
memory.legend()

time.plot(workloads, [r["firstProposalsSeconds"] for r in runs], "o-", label="start to every first proposal")
time.plot(workloads, [r["reconcileP99Seconds"] for r in runs], "s-", label="reconcile p99")
time.plot(workloads, [r["reconcileMedianSeconds"] for r in runs], "^-", label="reconcile median")
time.set_xlabel("workloads (5 pods each)")
time.set_ylabel("seconds")
time.set_title("Start-up and reconcile time")
time.set_ylim(bottom=0)
time.legend()

fig.tight_layout()
fig.savefig(ROOT / "docs/figures/scale.png", dpi=110)
print("wrote docs/figures/scale.png")
