package dev.heapherd.lab;

/**
 * How big and how costly one service is: {@code sizeScale} multiplies its live set, {@code
 * opCostScale} the work of one operation (query breadth, rows touched, path lengths, document
 * size), and {@code seed} fixes the generated data and the sequence of operations.
 */
public record AppSettings(double sizeScale, double opCostScale, long seed) {

  /** {@code base} scaled by the size scale, at least {@code min}. */
  public int scaledSize(int base, int min) {
    return (int) Math.max(min, Math.round(base * sizeScale));
  }

  /** {@code base} scaled by the operation cost scale, at least {@code min}. */
  public int scaledCost(int base, int min) {
    return (int) Math.max(min, Math.round(base * opCostScale));
  }
}
