package dev.heapherd.plan;

import dev.heapherd.input.Quantity;
import java.util.Locale;

/**
 * The plan as one self-contained HTML page for review: per workload its GC cost curve with today,
 * the proposal, the linear rule and the equal split marked, the pool's budget as one bar, the
 * predicted GC time under each rule, held workloads and the caution. No scripts, no network: inline
 * SVG and CSS only, marks told apart by shape and label as well as colour.
 */
public final class PlanPage {

  /** Width of the budget bar in SVG units, as wide as a curve's plot. */
  private static final int WIDTH = CurvePlot.WIDTH;

  private static final String STYLE =
      """
      body{font:15px/1.4 system-ui,sans-serif;margin:0 auto;max-width:60rem;padding:1rem;color:#111}
      h1{font-size:1.4rem}h2{font-size:1.15rem;margin-top:2rem}
      table{border-collapse:collapse;margin:.5rem 0}td,th{border:1px solid #999;padding:.2rem .5rem;text-align:right}
      th:first-child,td:first-child{text-align:left}
      .caution{border:2px solid #111;padding:.6rem;font-weight:600}
      .workload{display:flex;flex-wrap:wrap;gap:1rem;align-items:flex-start;break-inside:avoid}
      .plot{flex:1 1 22rem;max-width:32rem}.plot svg{width:100%}
      svg{max-width:100%;height:auto}
      .marks td:first-child{text-align:center}
      #memory td:nth-child(2),#memory th:nth-child(2){text-align:left}
      @media print{body{max-width:none}.workload{page-break-inside:avoid}}
      """;

  private PlanPage() {}

  /** The page for {@code doc}. */
  public static String render(PlanDocument doc) {
    StringBuilder out = new StringBuilder();
    out.append("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">")
        .append("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">")
        .append("<title>Plan for pool ")
        .append(esc(doc.pool()))
        .append("</title><style>")
        .append(STYLE)
        .append("</style></head><body>\n");
    out.append("<h1>Plan for pool ").append(esc(doc.pool()));
    if (!doc.namespace().isEmpty()) {
      out.append(" in namespace ").append(esc(doc.namespace()));
    }
    out.append("</h1>\n<p>Metrics captured ")
        .append(esc(doc.capturedAt()))
        .append(" over ")
        .append(doc.windowSeconds())
        .append(" s.</p>\n<p class=\"caution\">Caution: ")
        .append(esc(doc.caution()))
        .append("</p>\n");
    forecasts(out, doc.predictedGcSecondsPerHour());
    budget(out, doc);
    for (PlanDocument.WorkloadEntry w : doc.workloads()) {
      workload(out, w);
    }
    if (!doc.held().isEmpty()) {
      out.append("<h2>Held, sizes unchanged</h2>\n<ul>\n");
      doc.held()
          .forEach(
              h ->
                  out.append("<li><b>")
                      .append(esc(h.name()))
                      .append("</b>: ")
                      .append(esc(h.reason()))
                      .append("</li>\n"));
      out.append("</ul>\n");
    }
    return out.append("</body></html>\n").toString();
  }

  private static void forecasts(StringBuilder out, PlanDocument.Forecast f) {
    out.append("<h2>Predicted pool GC time</h2>\n<table id=\"forecast\"><tr><th>split</th>")
        .append("<th>GC seconds per hour</th></tr>\n");
    row(out, "today", f.current());
    row(out, "proposal", f.proposed());
    row(out, "linear rule", f.linearRule());
    row(out, "equal split", f.equalSplit());
    out.append("</table>\n");
  }

  private static void row(StringBuilder out, String split, double secondsPerHour) {
    out.append("<tr><td>")
        .append(split)
        .append("</td><td data-seconds-per-hour=\"")
        .append(number(secondsPerHour))
        .append("\">")
        .append(String.format(Locale.ROOT, "%.1f", secondsPerHour))
        .append("</td></tr>\n");
  }

  /**
   * The budget as one bar: each workload's pods at their proposed limits, numbered as in the table
   * under it, then held memory, the pods' other containers and the room kept for surge pods.
   */
  private static void budget(StringBuilder out, PlanDocument doc) {
    out.append("<h2>Budget ")
        .append(Quantity.format(doc.budgetBytes()))
        .append(", used ")
        .append(Quantity.format(doc.usedBytes()))
        .append("</h2>\n<svg id=\"budget\" viewBox=\"0 0 ")
        .append(WIDTH)
        .append(" 40\" role=\"img\" aria-label=\"budget split by workload\">\n");
    double scale =
        (double) WIDTH / Math.max(doc.budgetBytes(), doc.usedBytes() + doc.surgeReserveBytes());
    double x = 0;
    StringBuilder rows = new StringBuilder();
    int n = 0;
    for (PlanDocument.WorkloadEntry w : doc.workloads()) {
      long bytes = (long) w.replicas() * w.limitBytes();
      n++;
      x = segment(out, x, bytes * scale, Integer.toString(n), n % 2 == 0 ? "#cde" : "#9ab");
      memoryRow(rows, Integer.toString(n), w.name() + " (" + w.replicas() + " pods)", bytes);
    }
    if (doc.heldMemoryBytes() > 0) {
      x = segment(out, x, doc.heldMemoryBytes() * scale, "H", "#fff");
      memoryRow(rows, "H", "held workloads", doc.heldMemoryBytes());
    }
    if (doc.sidecarMemoryBytes() > 0) {
      x = segment(out, x, doc.sidecarMemoryBytes() * scale, "S", "#fff");
      memoryRow(
          rows, "S", "other containers of the pods (never resized)", doc.sidecarMemoryBytes());
    }
    if (doc.surgeReserveBytes() > 0) {
      segment(out, x, doc.surgeReserveBytes() * scale, "R", "#fff");
      memoryRow(rows, "R", "room for rollouts' surge pods", doc.surgeReserveBytes());
    }
    memoryRow(
        rows,
        "",
        "unused",
        Math.max(0, doc.budgetBytes() - doc.usedBytes() - doc.surgeReserveBytes()));
    out.append("</svg>\n<table id=\"memory\"><tr><th>bar</th><th>memory of</th>")
        .append("<th>bytes</th></tr>\n")
        .append(rows)
        .append("</table>\n");
  }

  private static void memoryRow(StringBuilder rows, String key, String what, long bytes) {
    rows.append("<tr><td>")
        .append(key)
        .append("</td><td>")
        .append(esc(what))
        .append("</td><td data-bytes=\"")
        .append(bytes)
        .append("\">")
        .append(Quantity.format(bytes))
        .append("</td></tr>\n");
  }

  private static double segment(
      StringBuilder out, double x, double width, String key, String fill) {
    out.append("<rect x=\"")
        .append(number(x))
        .append("\" y=\"4\" height=\"30\" width=\"")
        .append(number(width))
        .append("\" fill=\"")
        .append(fill)
        .append("\" stroke=\"#111\"/><text x=\"")
        .append(number(x + width / 2))
        .append("\" y=\"24\" font-size=\"11\" text-anchor=\"middle\">")
        .append(key)
        .append("</text>\n");
    return x + width;
  }

  /** One workload: its curve with the four heaps marked, and the inputs the curve rests on. */
  private static void workload(StringBuilder out, PlanDocument.WorkloadEntry w) {
    out.append("<h2>")
        .append(esc(w.name()))
        .append("</h2>\n<div class=\"workload\" data-workload=\"")
        .append(esc(w.name()))
        .append("\">\n");
    out.append("<div class=\"plot\">");
    CurvePlot.append(out, w);
    out.append("</div>\n");
    out.append("<table><tr><th>input</th><th>value</th></tr>\n");
    fact(out, "heap today", Quantity.format(w.currentHeapBytes()));
    fact(out, "heap proposed", Quantity.format(w.heapBytes()));
    fact(out, "decided by", esc(w.bound()));
    fact(out, "live", Quantity.format(w.liveBytes()));
    fact(out, "k from", esc(w.gcConstantEstimator()));
    fact(out, "young share", share(w.young().share()));
    fact(out, "old share", share(w.oldShare()));
    fact(out, "heaps measured", Integer.toString(w.curveHeaps()));
    fact(out, "confidence", w.confidence().isEmpty() ? "not stated" : esc(w.confidence()));
    out.append("</table>\n</div>\n");
  }

  private static void fact(StringBuilder out, String name, String value) {
    out.append("<tr><td>").append(name).append("</td><td>").append(value).append("</td></tr>\n");
  }

  private static String share(PlanDocument.Share s) {
    return String.format(Locale.ROOT, "%.0f%% (%s)", 100 * s.value(), esc(s.source()));
  }

  static String number(double value) {
    return String.format(Locale.ROOT, "%.2f", value);
  }

  /** Text as HTML: a name or reason from a file may hold markup or control characters. */
  static String esc(String text) {
    StringBuilder out = new StringBuilder(text.length());
    for (char c : text.toCharArray()) {
      switch (c) {
        case '<' -> out.append("&lt;");
        case '>' -> out.append("&gt;");
        case '&' -> out.append("&amp;");
        case '"' -> out.append("&quot;");
        case '\'' -> out.append("&#39;");
        default -> out.append(Character.isISOControl(c) ? ' ' : c);
      }
    }
    return out.toString();
  }
}
