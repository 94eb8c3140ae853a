package dev.heapherd.plan;

import dev.heapherd.engine.Units;
import dev.heapherd.input.Quantity;
import java.util.Arrays;
import java.util.Locale;

/**
 * A workload's GC cost curve as inline SVG: one pod's GC seconds per hour over its heap, with
 * today, the proposal, the linear rule and the equal split marked by shape and label.
 */
final class CurvePlot {

  /** Plot size in SVG units; the page scales it to the window's width. */
  static final int WIDTH = 480;

  private static final int HEIGHT = 220;
  private static final int MARGIN = 44;

  /** Points along each curve: smooth at this size, small in the page. */
  private static final int CURVE_POINTS = 120;

  /** The plot's right edge beyond the largest marked heap, so the last mark is not on the edge. */
  private static final double RIGHT_PAD = 1.15;

  /** The plot's top: this many times the largest marked GC time, so the curve's steep end fits. */
  private static final double TOP_PAD = 1.6;

  /** The plot's left edge just above the heap at which the old generation holds only live data. */
  private static final double LEFT_PAD = 1.01;

  /** The lowest plot top, so a workload with no GC time still gets a drawable axis. */
  private static final double MIN_TOP_SECONDS_PER_HOUR = 1e-3;

  /** The four marked heaps, in this order, with the glyph the legend shows for each. */
  private static final String[] NAMES = {"today", "proposal", "linear rule", "equal split"};

  private static final String[] GLYPHS = {"\u25CF", "\u25A0", "\u25B3", "\u25C7"};

  private CurvePlot() {}

  /** Appends the SVG plot of {@code w}'s curve. */
  static void append(StringBuilder out, PlanDocument.WorkloadEntry w) {
    long[] marks = {
      w.currentHeapBytes(),
      w.heapBytes(),
      w.comparison().linearRuleHeapBytes(),
      w.comparison().equalSplitHeapBytes()
    };
    double high = Arrays.stream(marks).max().orElse(w.heapBytes()) * RIGHT_PAD;
    double low = Math.max(1, thrashing(w) * LEFT_PAD);
    double top = 0;
    for (long heap : marks) {
      top = Math.max(top, perHour(w, heap));
    }
    top = Math.max(top * TOP_PAD, MIN_TOP_SECONDS_PER_HOUR);
    out.append("<svg viewBox=\"0 0 ")
        .append(WIDTH)
        .append(' ')
        .append(HEIGHT)
        .append("\" role=\"img\" aria-label=\"GC cost curve of ")
        .append(PlanPage.esc(w.name()))
        .append("\">\n<polyline fill=\"none\" stroke=\"#111\" points=\"");
    for (int i = 0; i <= CURVE_POINTS; i++) {
      double heap = low + (high - low) * i / CURVE_POINTS;
      double y = Math.min(perHour(w, heap), top);
      out.append(PlanPage.number(px(heap, low, high)))
          .append(',')
          .append(PlanPage.number(py(y, top)))
          .append(' ');
    }
    out.append("\"/>\n");
    // Axes, with the range each covers written at their ends.
    out.append("<path d=\"M")
        .append(MARGIN)
        .append(' ')
        .append(MARGIN / 2)
        .append(" V")
        .append(HEIGHT - MARGIN)
        .append(" H")
        .append(WIDTH - MARGIN / 2)
        .append("\" fill=\"none\" stroke=\"#555\"/>\n");
    label(out, MARGIN, HEIGHT - MARGIN + 14, Quantity.format((long) low), "start");
    label(out, WIDTH - MARGIN, HEIGHT - MARGIN + 14, Quantity.format((long) high), "end");
    label(out, WIDTH / 2, HEIGHT - 8, "heap per pod", "middle");
    label(out, MARGIN - 4, MARGIN / 2 + 4, String.format(Locale.ROOT, "%.1f", top), "end");
    label(out, MARGIN - 4, HEIGHT - MARGIN, "0", "end");
    label(out, MARGIN + 4, MARGIN / 2 - 4, "GC seconds per hour, one pod", "start");
    for (int i = 0; i < marks.length; i++) {
      double heap = marks[i];
      out.append("<g data-mark=\"")
          .append(NAMES[i])
          .append("\" data-heap-bytes=\"")
          .append(marks[i])
          .append("\">")
          .append(shape(i, px(heap, low, high), py(Math.min(perHour(w, heap), top), top)))
          .append("</g>\n");
    }
    out.append("</svg>\n<table class=\"marks\"><tr><th>mark</th><th>split</th><th>heap</th>")
        .append("<th>GC s/h, one pod</th></tr>\n");
    for (int i = 0; i < marks.length; i++) {
      out.append("<tr><td>")
          .append(GLYPHS[i])
          .append("</td><td>")
          .append(NAMES[i])
          .append("</td><td>")
          .append(Quantity.format(marks[i]))
          .append("</td><td>")
          .append(String.format(Locale.ROOT, "%.1f", perHour(w, marks[i])))
          .append("</td></tr>\n");
    }
    out.append("</table>\n");
  }

  private static void label(StringBuilder out, double x, double y, String text, String anchor) {
    out.append("<text x=\"")
        .append(PlanPage.number(x))
        .append("\" y=\"")
        .append(PlanPage.number(y))
        .append("\" font-size=\"11\" text-anchor=\"")
        .append(anchor)
        .append("\">")
        .append(PlanPage.esc(text))
        .append("</text>\n");
  }

  /** GC seconds per hour of one pod at {@code heapBytes}, from the plan's curve (docs/model.md). */
  static double perHour(PlanDocument.WorkloadEntry w, double heapBytes) {
    double young =
        w.young().constant() == 0
            ? 0
            : w.young().constant() / (w.young().share().value() * heapBytes);
    double headroom = w.oldShare().value() * heapBytes - w.liveBytes() - w.offsetBytes();
    double old =
        w.gcConstant() == 0
            ? 0
            : headroom <= 0 ? Double.POSITIVE_INFINITY : w.gcConstant() / headroom;
    return Units.SECONDS_PER_HOUR * (w.heapIndependentGcSecondsPerSecond() + young + old);
  }

  /** The heap below which the old generation cannot hold the live set. */
  private static double thrashing(PlanDocument.WorkloadEntry w) {
    return (w.liveBytes() + w.offsetBytes()) / w.oldShare().value();
  }

  /** Mark {@code i}: filled circle, filled square, open triangle, open diamond. */
  private static String shape(int i, double x, double y) {
    String open = "\" fill=\"none\" stroke=\"#111\" stroke-width=\"1.5\"/>";
    return switch (i) {
      case 0 ->
          "<circle cx=\"" + PlanPage.number(x) + "\" cy=\"" + PlanPage.number(y) + "\" r=\"5\"/>";
      case 1 ->
          "<rect x=\""
              + PlanPage.number(x - 5)
              + "\" y=\""
              + PlanPage.number(y - 5)
              + "\" width=\"10\" height=\"10\"/>";
      case 2 -> "<polygon points=\"" + points(x, y - 7, x - 6, y + 5, x + 6, y + 5) + open;
      default -> "<polygon points=\"" + points(x, y - 7, x + 7, y, x, y + 7, x - 7, y) + open;
    };
  }

  private static String points(double... xy) {
    StringBuilder s = new StringBuilder();
    for (int i = 0; i < xy.length; i += 2) {
      s.append(PlanPage.number(xy[i])).append(',').append(PlanPage.number(xy[i + 1])).append(' ');
    }
    return s.toString().strip();
  }

  private static double px(double heap, double low, double high) {
    return MARGIN + (WIDTH - 2.0 * MARGIN) * (heap - low) / (high - low);
  }

  private static double py(double secondsPerHour, double top) {
    return HEIGHT - MARGIN - (HEIGHT - 2.0 * MARGIN) * secondsPerHour / top;
  }
}
