package dev.heapherd.lab;

/**
 * One lab service: it builds its live set once, then does one unit of real work per call. Calls
 * come from a single worker thread, so implementations need no locking of their own.
 */
public interface LabApp extends AutoCloseable {

  /** Builds the live set (index, tables, cache, graph or documents). */
  void load() throws Exception;

  /** Does one operation of the service's mix. */
  void operate() throws Exception;

  @Override
  default void close() throws Exception {}
}
