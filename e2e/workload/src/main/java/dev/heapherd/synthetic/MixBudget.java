package dev.heapherd.synthetic;

import java.util.List;

/**
 * Splits byte budgets across the size mix into whole arrays, carrying each class's remainder to the
 * next budget so that large arrays are made as often as their share says, just not every tick.
 */
public final class MixBudget {

  private final double[] fractions;
  private final long[] arrayBytes;
  private final double[] carriedBytes;

  /** A budget for the mix, where {@code arrayBytes[i]} is the heap size of one array of class i. */
  public MixBudget(List<SizeClass> classes, long[] arrayBytes) {
    if (classes.size() != arrayBytes.length) {
      throw new IllegalArgumentException("one array size per class is needed");
    }
    this.fractions = classes.stream().mapToDouble(SizeClass::byteFraction).toArray();
    this.arrayBytes = arrayBytes.clone();
    this.carriedBytes = new double[arrayBytes.length];
  }

  /** Adds {@code bytes} to the budget and returns how many arrays of each class it pays for. */
  public int[] take(long bytes) {
    int[] counts = new int[fractions.length];
    for (int index = 0; index < fractions.length; index++) {
      carriedBytes[index] += bytes * fractions[index];
      long whole = (long) (carriedBytes[index] / arrayBytes[index]);
      counts[index] = (int) Math.min(whole, Integer.MAX_VALUE);
      carriedBytes[index] -= (double) counts[index] * arrayBytes[index];
    }
    return counts;
  }
}
