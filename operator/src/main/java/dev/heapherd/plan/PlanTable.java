package dev.heapherd.plan;

import dev.heapherd.engine.Bound;
import dev.heapherd.engine.GcConstantEstimator;
import dev.heapherd.input.ErrorText;
import dev.heapherd.input.Quantity;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/** Renders a {@link PlanDocument} as a table for people reviewing a proposal. */
public final class PlanTable {

  private static final String[] HEADER = {
    "WORKLOAD",
    "PODS",
    "LIVE",
    "HEAP NOW",
    "HEAP NEXT",
    "LIMIT NEXT",
    "GC s/h NOW",
    "GC s/h NEXT",
    "DECIDED BY",
    "k FROM",
    "YOUNG SHARE"
  };

  private PlanTable() {}

  /** The whole report: heading, table, pool totals, binding constraints and the caution. */
  public static String render(PlanDocument doc) {
    StringBuilder out = new StringBuilder();
    String where = doc.namespace().isEmpty() ? "" : " in namespace " + doc.namespace();
    out.append("Plan for pool ").append(doc.pool()).append(where).append('\n');
    out.append("Metrics captured ")
        .append(doc.capturedAt())
        .append(" over ")
        .append(doc.windowSeconds())
        .append(" s\n\n");

    List<String[]> rows = new ArrayList<>();
    rows.add(HEADER);
    for (PlanDocument.WorkloadEntry w : doc.workloads()) {
      rows.add(
          new String[] {
            w.name(),
            Integer.toString(w.replicas()),
            Quantity.format(w.liveBytes()),
            Quantity.format(w.currentHeapBytes()),
            Quantity.format(w.heapBytes()) + " " + change(w.currentHeapBytes(), w.heapBytes()),
            Quantity.format(w.limitBytes()),
            seconds(w.predictedGcSecondsPerHour().current()),
            seconds(w.predictedGcSecondsPerHour().proposed()),
            w.bound(),
            w.gcConstantEstimator(),
            w.young().constant() > 0
                ? String.format(
                    Locale.ROOT,
                    "%.0f%% %s",
                    100 * w.young().share().value(),
                    w.young().share().source())
                : "-"
          });
    }
    appendColumns(out, rows);

    var gc = doc.predictedGcSecondsPerHour();
    out.append('\n');
    String objective = "budget".equals(doc.objective()) ? "budget" : "pool size chosen by prices";
    out.append(
        String.format(
            Locale.ROOT,
            "Memory: %s of %s %s (minimum with every heap at its floor: %s)%n",
            Quantity.format(doc.usedBytes()),
            Quantity.format(doc.budgetBytes()),
            objective,
            Quantity.format(doc.minimumBudgetBytes())));
    out.append(
        String.format(
            Locale.ROOT,
            "Predicted GC seconds per hour: now %s, proposed %s (%s);"
                + " linear rule %s, equal split %s%n",
            seconds(gc.current()),
            seconds(gc.proposed()),
            percent(gc.current(), gc.proposed()),
            seconds(gc.linearRule()),
            seconds(gc.equalSplit())));
    if (!doc.feasible()) {
      out.append("NOT FEASIBLE: the heap floors alone need ")
          .append(Quantity.format(doc.minimumBudgetBytes()))
          .append(", more than the budget of ")
          .append(Quantity.format(doc.budgetBytes()))
          .append(". Every heap is held at its low bound (floor or step limit).\n");
    }
    List<String> binding =
        doc.workloads().stream()
            .filter(w -> !"none".equals(w.bound()))
            .map(
                w ->
                    w.name() + " at its " + w.bound() + " (" + Quantity.format(w.heapBytes()) + ")")
            .toList();
    for (var h : doc.held()) {
      out.append("Held, sizes unchanged: ")
          .append(h.name())
          .append(": ")
          .append(ErrorText.oneLine(h.reason()))
          .append('\n');
    }
    if (doc.held().stream().anyMatch(h -> h.memoryBytes() == 0)) {
      out.append("Some held workloads' memory is unknown and not counted above: make sure the")
          .append(" budget leaves room for them.\n");
    }
    List<String> kept =
        kept(doc, w -> !GcConstantEstimator.HISTORY_FIT.label().equals(w.gcConstantEstimator()));
    if (!kept.isEmpty()) {
      out.append("Kept at today's heap, no GC time was measured to predict a change from: ")
          .append(String.join(", ", kept))
          .append(". Measure over a longer window or check that the pods export GC metrics.\n");
    }
    List<String> flat =
        kept(doc, w -> GcConstantEstimator.HISTORY_FIT.label().equals(w.gcConstantEstimator()));
    if (!flat.isEmpty()) {
      out.append("Kept at today's heap, GC time did not change with heap across the measured")
          .append(" heaps, so nothing says a change would pay: ")
          .append(String.join(", ", flat))
          .append('\n');
    }
    List<String> onePoint =
        doc.workloads().stream()
            .filter(w -> w.curveHeaps() < 2)
            .map(PlanDocument.WorkloadEntry::name)
            .toList();
    if (!onePoint.isEmpty()) {
      out.append("Curves resting on one measured heap (elsewhere the model extrapolates): ")
          .append(String.join(", ", onePoint))
          .append('\n');
    }
    out.append("Binding constraints: ")
        .append(binding.isEmpty() ? "none" : String.join(", ", binding))
        .append('\n');
    out.append("Caution: ").append(doc.caution()).append('\n');
    return out.toString();
  }

  /** Appends {@code rows}, the first being the header, as left-aligned columns. */
  public static void appendColumns(StringBuilder out, List<String[]> rows) {
    int[] widths = new int[rows.get(0).length];
    for (String[] row : rows) {
      for (int i = 0; i < row.length; i++) {
        widths[i] = Math.max(widths[i], row[i].length());
      }
    }
    for (String[] row : rows) {
      StringBuilder line = new StringBuilder();
      for (int i = 0; i < row.length; i++) {
        line.append(String.format(Locale.ROOT, "%-" + widths[i] + "s", row[i]));
        if (i < row.length - 1) {
          line.append("  ");
        }
      }
      out.append(line.toString().stripTrailing()).append('\n');
    }
  }

  private static String change(long from, long to) {
    return "(" + percent(from, to) + ")";
  }

  private static String percent(double from, double to) {
    if (from == 0) {
      return to == 0 ? "+0%" : "new";
    }
    return String.format(Locale.ROOT, "%+.0f%%", 100.0 * (to - from) / from);
  }

  private static String seconds(double value) {
    return Double.isFinite(value) ? String.format(Locale.ROOT, "%.1f", value) : "unbounded";
  }

  private static List<String> kept(
      PlanDocument doc, java.util.function.Predicate<PlanDocument.WorkloadEntry> which) {
    return doc.workloads().stream()
        .filter(w -> Bound.KEPT.label().equals(w.bound()) && which.test(w))
        .map(PlanDocument.WorkloadEntry::name)
        .toList();
  }
}
