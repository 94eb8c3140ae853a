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
    String[] names = {"today", "proposal", "linear rule", "equal split"};
    String[] shapes = {"circle", "square", "triangle", "diamond"};
    for (int i = 0; i < marks.length; i++) {
      double heap = marks[i];
      double x = px(heap, low, high);
      double y = py(Math.min(perHour(w, heap), top), top);
      out.append("<g data-mark=\"")
          .append(names[i])
          .append("\" data-heap-bytes=\"")
          .append(marks[i])
          .append("\">")
          .append(shape(shapes[i], x, y))
          .append("<text x=\"")
          .append(PlanPage.number(x + 6))
          .append("\" y=\"")
          .append(PlanPage.number(y - 6 - 10 * i))
          .append("\" font-size=\"10\">")
          .append(names[i])
          .append(' ')
          .append(Quantity.format(marks[i]))
          .append("</text></g>\n");
    }
    out.append("<text x=\"")
        .append(MARGIN)
        .append("\" y=\"")
        .append(HEIGHT - 6)
        .append("\" font-size=\"10\">heap per pod, ")
        .append(Quantity.format((long) low))
        .append(" to ")
        .append(Quantity.format((long) high))
        .append("; GC seconds per hour per pod up to ")
        .append(String.format(Locale.ROOT, "%.1f", top))
        .append("</text>\n</svg>\n");
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

  private static String shape(String kind, double x, double y) {
    return switch (kind) {
      case "circle" ->
          "<circle cx=\"" + PlanPage.number(x) + "\" cy=\"" + PlanPage.number(y) + "\" r=\"4\"/>";
      case "square" ->
          "<rect x=\""
              + PlanPage.number(x - 4)
              + "\" y=\""
              + PlanPage.number(y - 4)
              + "\" width=\"8\" height=\"8\"/>";
      case "triangle" ->
          "<polygon points=\""
              + points(x, y - 5, x - 5, y + 4, x + 5, y + 4)
              + "\" fill=\"none\" stroke=\"#111\"/>";
      default ->
          "<polygon points=\""
              + points(x, y - 5, x + 5, y, x, y + 5, x - 5, y)
              + "\" fill=\"none\" stroke=\"#111\"/>";
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
