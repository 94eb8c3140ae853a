package dev.heapherd.lab;

import java.util.Arrays;
import java.util.random.RandomGenerator;

/**
 * Draws ranks 0..n-1 with probability proportional to 1/(rank+1)^exponent, by binary search in the
 * cumulative distribution: the skew of real key popularity and word frequency.
 */
public final class Zipf {

  private final double[] cumulative;

  /** A distribution over {@code n} ranks with the given exponent. */
  public Zipf(int n, double exponent) {
    if (n < 1) {
      throw new IllegalArgumentException("n must be at least 1");
    }
    cumulative = new double[n];
    double sum = 0;
    for (int rank = 0; rank < n; rank++) {
      sum += 1.0 / Math.pow(rank + 1, exponent);
      cumulative[rank] = sum;
    }
    for (int rank = 0; rank < n; rank++) {
      cumulative[rank] /= sum;
    }
  }

  /** The number of ranks. */
  public int size() {
    return cumulative.length;
  }

  /** One rank; rank 0 is the most frequent. */
  public int sample(RandomGenerator random) {
    int index = Arrays.binarySearch(cumulative, random.nextDouble());
    int rank = index >= 0 ? index : -index - 1;
    return Math.min(rank, cumulative.length - 1);
  }
}
