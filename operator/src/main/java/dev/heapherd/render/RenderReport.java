package dev.heapherd.render;

import dev.heapherd.input.ErrorText;
import dev.heapherd.input.Quantity;
import dev.heapherd.plan.PlanDocument;
import dev.heapherd.plan.PlanTable;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/** The summary a render prints for the pipeline's log and the reviewer of its change. */
public final class RenderReport {

  private static final String[] HEADER = {"WORKLOAD", "KIND", "HEAP", "LIMIT", "FILE"};

  private static final String ARROW = " -> ";

  private RenderReport() {}

  /**
   * The summary of {@code outcome}.
   *
   * @param pool the pool's name
   * @param namespace the pool's namespace, empty when it has none
   * @param target the folder the files are written to
   * @param check nothing is written, the summary says what would be
   */
  public static String text(
      Renderer.Outcome outcome, String pool, String namespace, Path target, boolean check) {
    StringBuilder out = new StringBuilder();
    int workloads = outcome.changes().size() + outcome.kept().size();
    out.append("Pool ").append(pool);
    if (!namespace.isEmpty()) {
      out.append(" in namespace ").append(namespace);
    }
    if (outcome.changes().isEmpty()) {
      out.append(": no manifest changes for its ").append(workloads).append(" workloads\n");
    } else {
      out.append(": ")
          .append(outcome.changes().size())
          .append(" of ")
          .append(workloads)
          .append(" workloads ")
          .append(check ? "would change" : "changed")
          .append(" in ")
          .append(outcome.changedFiles().size())
          .append(outcome.changedFiles().size() == 1 ? " file" : " files")
          .append(check ? " (--check: nothing written)\n" : "\n");
      List<String[]> rows = new ArrayList<>();
      rows.add(HEADER);
      for (Renderer.Change c : outcome.changes()) {
        rows.add(
            new String[] {
              c.name(),
              c.kind(),
              size(c.heapFromBytes()) + ARROW + Quantity.format(c.heapToBytes()),
              (c.limitFromBytes().isPresent() ? size(c.limitFromBytes().getAsLong()) : "none")
                  + ARROW
                  + Quantity.format(c.limitToBytes()),
              target.resolve(c.file()).toString()
            });
      }
      out.append('\n');
      PlanTable.appendColumns(out, rows);
      out.append('\n');
    }
    for (Renderer.Kept k : outcome.kept()) {
      out.append("Unchanged: ")
          .append(k.name())
          .append(": ")
          .append(ErrorText.oneLine(k.reason()))
          .append('\n');
    }
    for (Renderer.Change c : outcome.changes()) {
      if (c.rewritten()) {
        out.append("Written anew, comments and layout not kept: ")
            .append(c.kind())
            .append(' ')
            .append(c.name())
            .append(" in ")
            .append(target.resolve(c.file()))
            .append(" (a field to set was missing or not a one-line value)\n");
      }
    }
    if (!outcome.unplanned().isEmpty()) {
      out.append("In the metrics but not among the pool's manifests, so neither planned nor")
          .append(" counted in the budget: ")
          .append(String.join(", ", outcome.unplanned()))
          .append('\n');
    }
    if (!outcome.plan().feasible()) {
      out.append("NOT FEASIBLE: the heap floors alone need ")
          .append(Quantity.format(outcome.plan().minimumBudgetBytes()))
          .append(", more than the budget; heaps are proposed at their low bounds.\n");
    }
    out.append("Caution: ").append(PlanDocument.CAUTION).append('\n');
    return out.toString();
  }

  private static String size(long bytes) {
    return bytes == 0 ? "none" : Quantity.format(bytes);
  }
}
