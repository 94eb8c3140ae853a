#!/usr/bin/env python3
"""Runs the benchmark lab: measure the fleet, plan it, and compare splits of the same memory.

For each collector: run the lab's real applications at today's heaps, measure them with the real
Prometheus and `heapherd snapshot`, plan with `heapherd plan` (the first step). Roll the first step
out: run the fleet at its heaps, measure again and plan from there with every earlier point as
history, as the operator does after a rollout; repeat for --learning-steps rollouts (the last plan
is the proposal). Then run the fleet again at the same total
heap under the linear rule, an equal split, both steps and a small grid of splits around the
proposal, each twice in alternating order, and compare the pool's measured GC time. Writes
results as JSON and the plots and tables of docs/benchmarks.md.
"""

import argparse
import json
import os
import subprocess
import sys
import shutil
import time
from datetime import timezone
from pathlib import Path

import yaml

ROOT = Path(__file__).resolve().parents[2]
BUILT_LAB_JAR = ROOT / "e2e" / "lab" / "target" / "heapherd-lab.jar"
BUILT_HEAPHERD_JAR = ROOT / "operator" / "target" / "heapherd.jar"
# The jars the lab runs: copies made at start, so a rebuild during a long run changes nothing.
LAB_JAR = BUILT_LAB_JAR
HEAPHERD_JAR = BUILT_HEAPHERD_JAR
MIB = 1 << 20

# Today's heaps: what a team sizing by habit might give each service (about two and a half times
# what it loads), in MiB. Our scenario; the lab's own defaults (e2e/lab/README.md).
TODAY_MIB = {"search": 320, "sql": 384, "cache": 352, "graph": 256, "codec": 320}

# Share of the proposal's headroom above its floor moved between two workloads for the grid's
# other splits: large enough to change GC time measurably, small enough to stay near the optimum.
GRID_SHIFT = 0.3

# Pairs the grid moves memory between: the workloads the proposal gave the most and the least
# headroom, both ways. A small grid: each split costs two runs of the whole fleet.
GRID_PAIRS = 2

# The acceptance bounds of the lab: within 5 % of the grid's best, predicted change within 20 %
# of the measured one.
GRID_TOLERANCE = 0.05
PREDICTION_TOLERANCE = 0.20

# How far a workload's GC time in the snapshot (Prometheus, over the window) may stray from the
# lab's own figure (the collector MXBeans, over the measured phase) before the step is measured
# again: the windows differ by a scrape interval at each end, so a few percent is expected; more
# means a scrape was missed or the window caught the warm-up. The absolute part keeps workloads
# with almost no GC from tripping the relative bound.
SNAPSHOT_RELATIVE_TOLERANCE = 0.25
SNAPSHOT_ABSOLUTE_TOLERANCE = 0.001


# Measured seconds per run, by collector, as in the published runs (docs/benchmarks.md): Parallel's
# full collections come every half minute or so at today's heaps, and a window must hold several
# for one more or less not to swing a split's figure by a fifth; G1's shorter pauses come often.
DEFAULT_MEASURE_SECONDS = {"G1": 40, "Parallel": 120}


def log(message):
    print(f"[lab {time.strftime('%H:%M:%S')}] {message}", flush=True)


def heaps_arg(heaps_mib):
    return ",".join(f"{app}={int(mib)}Mi" for app, mib in sorted(heaps_mib.items()))


def run_fleet(collector, heaps_mib, args, out, hold_for_snapshot=None):
    """Runs the fleet once; with hold_for_snapshot, calls it with the Prometheus URL mid-run."""
    command = [
        "java", "-jar", str(LAB_JAR), "run",
        "--collector", collector,
        "--heaps", heaps_arg(heaps_mib),
        "--warmup-seconds", str(args.warmup_seconds),
        "--measure-seconds", str(args.measure_seconds),
        "--out", str(out),
    ]
    if hold_for_snapshot is None:
        # A split can starve a workload into an out-of-memory exit: that is a result, not an error.
        if subprocess.run(command, stdout=sys.stderr).returncode != 0:
            log(f"run failed at {heaps_arg(heaps_mib)}: counted as unbounded GC time")
            return None
        return json.loads(out.read_text())
    command += ["--keep-running-seconds", str(args.hold_seconds)]
    proc = subprocess.Popen(command, stdout=subprocess.PIPE, text=True)
    try:
        for line in proc.stdout:
            sys.stderr.write(line)
            if line.startswith("holding "):
                url = next(t for t in line.split() if t.startswith("prometheus="))
                hold_for_snapshot(url.split("=", 1)[1])
                break
    finally:
        proc.wait()
    if proc.returncode != 0:
        raise SystemExit(f"lab run failed with exit code {proc.returncode}")
    return json.loads(out.read_text())


def pool_gc(result):
    if result is None:
        return float("inf")
    return sum(a["gcSecondsPerSecond"] for a in result["apps"])


def snapshot_disagreements(snapshot_path, result):
    """Workloads whose snapshot GC time strays from the lab's MXBean figure, with both figures."""
    lab_gc = {a["app"]: a["gcSecondsPerSecond"] for a in result["apps"]}
    checks = []
    for w in yaml.safe_load(snapshot_path.read_text())["workloads"]:
        measured = lab_gc.get(w["name"])
        if measured is None:
            continue
        seen = w["gcSecondsPerSecond"]
        off = abs(seen - measured)
        checks.append({
            "workload": w["name"],
            "snapshotGcSecondsPerSecond": seen,
            "labGcSecondsPerSecond": measured,
            "agrees": off <= max(SNAPSHOT_ABSOLUTE_TOLERANCE, SNAPSHOT_RELATIVE_TOLERANCE * measured),
        })
    return checks


def heapherd(*arguments):
    return subprocess.run(
        ["java", "-jar", str(HEAPHERD_JAR), *arguments], check=True, capture_output=True, text=True
    ).stdout


def curve(entry, heap_bytes):
    """GC seconds per second of one pod at heap_bytes, from a plan entry's curve (docs/model.md)."""
    young = entry["young"]
    old_headroom = entry["oldShare"]["value"] * heap_bytes - entry["liveBytes"] - entry["offsetBytes"]
    if old_headroom <= 0:
        return float("nan")
    return (
        entry["heapIndependentGcSecondsPerSecond"]
        + young["constant"] / (young["share"]["value"] * heap_bytes)
        + entry["gcConstant"] / old_headroom
    )


def predicted_pool(plan, heaps_mib):
    """The plan's curves summed over the pool at heaps_mib: GC seconds per second."""
    return sum(e["replicas"] * e["weight"] * curve(e, heaps_mib[e["name"]] * MIB)
               for e in plan["workloads"])


def snapshot_points(path):
    """Each workload's measured point in a snapshot file, as a `history` entry."""
    points = {}
    for w in yaml.safe_load(path.read_text())["workloads"]:
        young = w["youngGcSecondsPerSecond"]
        points[w["name"]] = {
            "heapBytes": w["heapMaxBytes"],
            "liveBytes": w["liveBytes"],
            "youngGcSecondsPerSecond": young,
            "oldGcSecondsPerSecond": max(0.0, w["gcSecondsPerSecond"] - young),
        }
    return points


def with_history(snapshot_path, earlier_path, out_path):
    """The snapshot with the earlier snapshot's points (and history) as each workload's history."""
    doc = yaml.safe_load(snapshot_path.read_text())
    earlier = yaml.safe_load(earlier_path.read_text())
    earlier_history = {w["name"]: w.get("history", []) for w in earlier["workloads"]}
    earlier_points = snapshot_points(earlier_path)
    for w in doc["workloads"]:
        if w["name"] in earlier_points:
            w["history"] = earlier_history[w["name"]] + [earlier_points[w["name"]]]
    # PyYAML reads the timestamp as a datetime; the snapshot format wants RFC 3339 in UTC.
    captured = doc.get("capturedAt")
    if hasattr(captured, "isoformat"):
        doc["capturedAt"] = captured.astimezone(timezone.utc).isoformat().replace("+00:00", "Z")
    out_path.write_text(yaml.safe_dump(doc, sort_keys=False))


def write_pool(path, budget_bytes):
    # The product's defaults for headroom and step (docs/heappool.md); no limit margin, so the
    # budget is heap plus measured non-heap.
    path.write_text(
        f"""# The lab's pool: five services of one fictional team, one heap budget.
apiVersion: heapherd.dev/v1alpha1
kind: HeapPool
metadata:
  name: lab
  namespace: lab
spec:
  mode: DryRun
  memoryBudget: "{budget_bytes}"
  selector:
    matchLabels:
      heapherd.dev/pool: lab
  defaults:
    heapFloor: 64Mi
    limitMargin: 0Mi
"""
    )


def grid_splits(proposal_mib, floor_mib):
    """The proposal with headroom moved between its richest and poorest workloads, both ways."""
    by_room = sorted(proposal_mib, key=lambda a: proposal_mib[a] - floor_mib[a])
    pairs = [(by_room[-1], by_room[0]), (by_room[0], by_room[-1])][:GRID_PAIRS]
    splits = []
    for giver, taker in pairs:
        moved = GRID_SHIFT * (proposal_mib[giver] - floor_mib[giver])
        if moved < 1:
            continue
        split = dict(proposal_mib)
        split[giver] -= moved
        split[taker] += moved
        splits.append((f"grid {giver}->{taker}", split))
    return splits


def lab(collector, args, work):
    work.mkdir(parents=True, exist_ok=True)
    today_snapshot = work / "snapshot.yaml"
    pool_file = work / "pool.yaml"

    def snapshot_to(path):
        def take(url):
            log(f"{collector}: snapshot from {url} to {path.name}")
            text = heapherd(
                "snapshot", "--prometheus", url, "--pool", str(ROOT / "e2e" / "lab" / "pool.yaml"),
                "--window-seconds", str(args.measure_seconds), "-o", str(path))
            sys.stderr.write(text)
        return take

    def plan_json(snapshot):
        return json.loads(heapherd(
            "plan", "--pool", str(pool_file), "--snapshot", str(snapshot), "-o", "json"))

    log(f"{collector}: today's heaps {TODAY_MIB}")
    today = run_fleet(collector, TODAY_MIB, args, work / "today.json", snapshot_to(today_snapshot))
    # The budget is what today's heaps use with their measured non-heap memory: equal memory.
    plan_probe = json.loads(heapherd(
        "plan", "--pool", str(ROOT / "e2e" / "lab" / "pool.yaml"), "--snapshot",
        str(today_snapshot), "-o", "json"))
    budget = sum(
        w["replicas"] * (w["currentHeapBytes"] + -(-w["nonHeapBytes"] // MIB) * MIB)
        for w in plan_probe["workloads"])
    write_pool(pool_file, budget)
    first = plan_json(today_snapshot)
    (work / "plan-first-step.json").write_text(json.dumps(first, indent=2))
    sys.stderr.write(heapherd("plan", "--pool", str(pool_file), "--snapshot", str(today_snapshot)))
    first_entries = {w["name"]: w for w in first["workloads"]}
    first_step = {a: first_entries[a]["heapBytes"] / MIB for a in first_entries}

    # Each rollout: measured at the last plan's heaps, planned again with every earlier point.
    learned_snapshot = today_snapshot
    rolled = first_step
    steps = []
    snapshot_checks = [{"step": 0, "checks": snapshot_disagreements(today_snapshot, today)}]
    for step in range(1, args.learning_steps + 1):
        log(f"{collector}: step {step} rolled out: {heaps_arg(rolled)}")
        step_snapshot = work / f"snapshot-step-{step}.yaml"
        step_run = run_fleet(
            collector, rolled, args, work / f"step-{step}.json", snapshot_to(step_snapshot))
        checks = snapshot_disagreements(step_snapshot, step_run)
        if not all(c["agrees"] for c in checks):
            # Learning from a point the lab itself contradicts would fit noise: measure once more.
            log(f"{collector}: step {step} snapshot disagrees with the lab's figures, measuring again: "
                + ", ".join(f"{c['workload']} {c['snapshotGcSecondsPerSecond']:.4f} vs "
                            f"{c['labGcSecondsPerSecond']:.4f}" for c in checks if not c["agrees"]))
            step_run = run_fleet(
                collector, rolled, args, work / f"step-{step}.json", snapshot_to(step_snapshot))
            checks = snapshot_disagreements(step_snapshot, step_run)
        snapshot_checks.append({"step": step, "checks": checks})
        earlier = learned_snapshot
        learned_snapshot = work / f"snapshot-learned-{step}.yaml"
        with_history(step_snapshot, earlier, learned_snapshot)
        plan = plan_json(learned_snapshot)
        (work / f"plan-step-{step}.json").write_text(json.dumps(plan, indent=2))
        sys.stderr.write(
            heapherd("plan", "--pool", str(pool_file), "--snapshot", str(learned_snapshot)))
        steps.append({"heapsMib": rolled, "poolGcSecondsPerSecond": pool_gc(step_run)})
        rolled = {w["name"]: w["heapBytes"] / MIB for w in plan["workloads"]}
    entries = {w["name"]: w for w in plan["workloads"]}
    proposal = {a: entries[a]["heapBytes"] / MIB for a in entries}
    linear = {a: first_entries[a]["comparison"]["linearRuleHeapBytes"] / MIB for a in entries}
    equal = {a: first_entries[a]["comparison"]["equalSplitHeapBytes"] / MIB for a in entries}
    floor = {a: entries[a]["lowHeapBytes"] / MIB for a in entries}
    splits = [
        ("today", dict(TODAY_MIB)),
        ("linear rule", linear),
        ("equal split", equal),
        ("first step", first_step),
        ("proposal", proposal),
    ]
    splits += grid_splits(proposal, floor)

    runs = {name: [] for name, _ in splits}
    for round_index in range(args.rounds):
        order = splits if round_index % 2 == 0 else list(reversed(splits))
        for name, heaps in order:
            log(f"{collector}: round {round_index + 1}, {name}: {heaps_arg(heaps)}")
            file = work / f"run-{name.replace(' ', '_').replace('>', '')}-{round_index}.json"
            file.unlink(missing_ok=True)
            runs[name].append(run_fleet(collector, heaps, args, file))

    measured = {name: sum(pool_gc(r) for r in rs) / len(rs) for name, rs in runs.items()}
    grid_best = min(measured.values())
    # Both from the learned curves, so the predicted change is the proposal's own claim.
    predicted_change = predicted_pool(plan, proposal) / predicted_pool(plan, TODAY_MIB) - 1
    first_predicted_change = (
        first["predictedGcSecondsPerHour"]["proposed"] / first["predictedGcSecondsPerHour"]["current"]
        - 1)
    measured_change = measured["proposal"] / measured["today"] - 1
    summary = {
        "collector": collector,
        "todayMib": TODAY_MIB,
        "budgetBytes": budget,
        "warmupSeconds": args.warmup_seconds,
        "measureSeconds": args.measure_seconds,
        "todayPoolGcSecondsPerSecond": pool_gc(today),
        "poolGcSecondsPerSecond": measured,
        "splitsMib": {name: heaps for name, heaps in splits},
        "predictedChange": predicted_change,
        "measuredChange": measured_change,
        "firstStepPredictedChange": first_predicted_change,
        "firstStepMeasuredChange": measured["first step"] / measured["today"] - 1,
        "proposalAtOrBelowBetterRule": measured["proposal"]
        <= min(measured["linear rule"], measured["equal split"]),
        "proposalWithinGridTolerance": measured["proposal"] <= grid_best * (1 + GRID_TOLERANCE),
        "predictionWithinTolerance": abs(predicted_change - measured_change)
        <= PREDICTION_TOLERANCE * abs(measured_change),
        "learningSteps": steps,
        "snapshotChecks": snapshot_checks,
        "firstStepPlan": first,
        "plan": plan,
        "today": today,
        "runs": runs,
    }
    (work / "summary.json").write_text(json.dumps(summary, indent=2))
    return summary


def main():
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--collectors", default="G1,Parallel")
    parser.add_argument("--warmup-seconds", type=int, default=30)
    # Default: DEFAULT_MEASURE_SECONDS for the collector.
    parser.add_argument("--measure-seconds", type=int, default=None)
    parser.add_argument("--hold-seconds", type=int, default=30)
    parser.add_argument("--rounds", type=int, default=2)
    # Rollouts measured before the proposal: each adds a heap point per workload to fit.
    parser.add_argument("--learning-steps", type=int, default=3)
    parser.add_argument("--work", default=str(ROOT / "e2e" / "lab" / "target" / "lab-runs"))
    parser.add_argument("--results", default=str(ROOT / "docs" / "lab"))
    args = parser.parse_args()
    global HEAPHERD_JAR, LAB_JAR
    Path(args.work).mkdir(parents=True, exist_ok=True)
    HEAPHERD_JAR = Path(args.work) / "heapherd.jar"
    shutil.copyfile(BUILT_HEAPHERD_JAR, HEAPHERD_JAR)
    LAB_JAR = Path(args.work) / "heapherd-lab.jar"
    shutil.copyfile(BUILT_LAB_JAR, LAB_JAR)
    results = Path(args.results)
    results.mkdir(parents=True, exist_ok=True)
    for collector in args.collectors.split(","):
        collector_args = argparse.Namespace(**vars(args))
        if collector_args.measure_seconds is None:
            collector_args.measure_seconds = DEFAULT_MEASURE_SECONDS.get(collector, 60)
        summary = lab(collector, collector_args, Path(args.work) / collector)
        (results / f"{collector}.json").write_text(json.dumps(summary, indent=2))
        log(f"{collector}: pool GC s/s per split: " + ", ".join(
            f"{k} {v:.4f}" for k, v in summary["poolGcSecondsPerSecond"].items()))
        log(f"{collector}: predicted change {summary['predictedChange']:+.1%},"
            f" measured {summary['measuredChange']:+.1%}")
    subprocess.run([sys.executable, str(ROOT / "docs" / "lab" / "report.py"), str(results)],
                   check=True)


if __name__ == "__main__":
    os.chdir(ROOT)
    main()
