package dev.heapherd.cli;

import dev.heapherd.input.ErrorText;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import dev.heapherd.input.Snapshot;
import dev.heapherd.input.SnapshotWriter;
import dev.heapherd.metrics.PrometheusEndpoint;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** {@code snapshot}: measures a pool's workloads in Prometheus and writes a snapshot file. */
@Command(
    name = "snapshot",
    mixinStandardHelpOptions = true,
    description = "Measure a pool's JVM workloads in Prometheus and write a metrics snapshot.")
final class SnapshotCommand implements Callable<Integer> {

  @Option(names = "--pool", required = true, description = "HeapPool YAML file.")
  Path pool;

  @Option(
      names = {"-o", "--output"},
      description = "File to write (default: standard output).")
  Path output;

  @Mixin MetricsOptions metrics;

  @CommandLine.Spec CommandLine.Model.CommandSpec spec;

  @Override
  public Integer call() {
    try {
      if (metrics.server.prometheus == null) {
        throw new InputException("--prometheus", "", "is required");
      }
      PoolFile poolFile = PoolFileReader.read(pool);
      Snapshot snapshot = metrics.measure(poolFile);
      String text =
          SnapshotWriter.write(snapshot, PrometheusEndpoint.redacted(metrics.server.prometheus));
      for (Snapshot.Held h : snapshot.held()) {
        spec.commandLine()
            .getErr()
            .println(ErrorText.oneLine("heapherd: held " + h.name() + ": " + h.reason()));
      }
      if (output == null) {
        spec.commandLine().getOut().print(text);
        spec.commandLine().getOut().flush();
      } else {
        Files.writeString(output, text);
      }
      return snapshot.workloads().isEmpty() ? Main.EXIT_NOTHING_MEASURED : 0;
    } catch (InputException e) {
      spec.commandLine().getErr().println("heapherd: " + ErrorText.oneLine(e.getMessage()));
      return Main.EXIT_BAD_INPUT;
    } catch (IOException e) {
      spec.commandLine()
          .getErr()
          .println("heapherd: cannot write " + output + ": " + e.getMessage());
      return Main.EXIT_BAD_INPUT;
    }
  }
}
