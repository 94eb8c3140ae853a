package dev.heapherd.engine;

/** What the allocator optimises for: a fixed memory budget or a trade of memory against CPU. */
public sealed interface Objective {

  /** Minimise the pool's weighted GC time within {@code bytes} of container memory. */
  record Budget(long bytes) implements Objective {
    /** Validates the budget. */
    public Budget {
      if (bytes <= 0) {
        throw new IllegalArgumentException("budget must be positive");
      }
    }
  }

  /**
   * Minimise memory cost plus GC CPU cost; the pool size follows from the prices.
   *
   * @param memoryPerGibHour price of one GiB of container memory for one hour
   * @param cpuPerCoreHour price of one core for one hour (GC seconds per second are cores)
   */
  record Prices(double memoryPerGibHour, double cpuPerCoreHour) implements Objective {
    /** Validates the prices. */
    public Prices {
      if (!(memoryPerGibHour > 0) || !(cpuPerCoreHour > 0)) {
        throw new IllegalArgumentException("prices must be positive");
      }
    }

    /**
     * The water level of the price optimum: minimising {@code p_m*E/GiB + p_c*w*k/(E-E0)} per pod
     * gives {@code E - E0 = sqrt(p_c*GiB/p_m) * sqrt(w*k)}.
     */
    public double waterLevel() {
      return Math.sqrt(cpuPerCoreHour * Units.GIB / memoryPerGibHour);
    }
  }
}
