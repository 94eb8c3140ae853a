package dev.heapherd.cli;

import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotReader;
import dev.heapherd.metrics.PrometheusEndpoint;
import java.nio.file.Path;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** What `plan` and `render` size a pool from: the pool file and its measurements. */
final class PoolInputs {

  @Option(names = "--pool", required = true, description = "HeapPool YAML file.")
  Path pool;

  @Option(names = "--snapshot", description = "Metrics snapshot (YAML or JSON).")
  Path snapshot;

  @Mixin MetricsOptions metrics;

  /** Refuses both or neither of --snapshot and --prometheus, naming {@code command}. */
  void requireOneSource(String command) throws InputException {
    if ((snapshot == null) == (metrics.server.prometheus == null)) {
      throw new InputException(command, "", "give exactly one of --snapshot or --prometheus");
    }
  }

  /** The pool file, read and validated. */
  PoolFile readPool() throws InputException {
    return PoolFileReader.read(pool);
  }

  /** The snapshot file, or the pool's namespace measured now in Prometheus. */
  Snapshot measurements(PoolFile poolFile) throws InputException {
    return snapshot != null ? SnapshotReader.read(snapshot) : metrics.measure(poolFile);
  }

  /** Where the measurements come from, for errors and reports; credentials redacted. */
  String source() {
    return snapshot != null
        ? snapshot.toString()
        : PrometheusEndpoint.redacted(metrics.server.prometheus);
  }
}
