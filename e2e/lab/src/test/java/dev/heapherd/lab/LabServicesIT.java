package dev.heapherd.lab;

import static org.assertj.core.api.Assertions.assertThat;
import static org.awaitility.Awaitility.await;

import java.io.IOException;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;
import java.util.OptionalDouble;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * Starts every lab service as a real JVM at a small size, all at once, and checks each serves its
 * GC metrics and the operation counter, which advances. Each process is stopped by its pid.
 */
class LabServicesIT {

  /** A twentieth of the default live set: the five load in seconds on 2 cores. */
  static final double SIZE_SCALE = 0.05;

  /** Heap for each service at that scale, with room for loading garbage. */
  static final String HEAP = "-Xmx192m";

  /** Time for the five JVMs to start and load together. */
  static final Duration READY_TIMEOUT = Duration.ofSeconds(45);

  /** Time for the counter to move: well above one operation's pace. */
  static final Duration ADVANCE_TIMEOUT = Duration.ofSeconds(10);

  static final Duration POLL_INTERVAL = Duration.ofMillis(200);

  static final Duration STOP_TIMEOUT = Duration.ofSeconds(15);

  static final int HTTP_OK = 200;

  private static final Pattern OPERATIONS =
      Pattern.compile("(?m)^lab_operations_total\\{[^}]*\\} ([0-9.eE+-]+)$");

  private static final HttpClient HTTP = HttpClient.newHttpClient();

  private static final Map<AppKind, Process> PROCESSES = new EnumMap<>(AppKind.class);
  private static final Map<AppKind, Integer> PORTS = new EnumMap<>(AppKind.class);
  private static final Map<AppKind, Path> STDOUT = new EnumMap<>(AppKind.class);

  @TempDir static Path dir;

  @BeforeAll
  static void startAll() throws IOException {
    for (AppKind app : AppKind.values()) {
      int port = freePort();
      List<String> command = new ArrayList<>();
      command.add(Path.of(System.getProperty("java.home"), "bin", "java").toString());
      command.addAll(List.of("-XX:+UseSerialGC", HEAP, "-jar", labJar().toString(), "serve"));
      command.addAll(
          List.of(
              "--app",
              app.label(),
              "--port",
              String.valueOf(port),
              "--size-scale",
              String.valueOf(SIZE_SCALE),
              "--parent-pid",
              String.valueOf(ProcessHandle.current().pid())));
      Path out = dir.resolve(app.label() + ".out");
      Process process =
          new ProcessBuilder(command)
              .redirectOutput(out.toFile())
              .redirectError(dir.resolve(app.label() + ".err").toFile())
              .start();
      PROCESSES.put(app, process);
      PORTS.put(app, port);
      STDOUT.put(app, out);
    }
  }

  @AfterAll
  static void stopAll() throws InterruptedException {
    PROCESSES.values().forEach(Process::destroy);
    for (Process process : PROCESSES.values()) {
      if (!process.waitFor(STOP_TIMEOUT.toSeconds(), TimeUnit.SECONDS)) {
        process.destroyForcibly().waitFor();
      }
    }
  }

  @ParameterizedTest
  @EnumSource(AppKind.class)
  void servesGcMetricsAndItsOperationsAdvance(AppKind app) throws Exception {
    Process process = PROCESSES.get(app);
    await()
        .atMost(READY_TIMEOUT)
        .pollInterval(POLL_INTERVAL)
        .until(
            () -> {
              assertThat(process.isAlive())
                  .as("%s exited: %s", app, Files.readString(dir.resolve(app.label() + ".err")))
                  .isTrue();
              return Files.readAllLines(STDOUT.get(app)).contains(ServeCommand.READY);
            });
    assertThat(get(app, "/healthz").statusCode()).isEqualTo(HTTP_OK);

    String metrics = get(app, "/metrics").body();
    assertThat(metrics)
        .contains("jvm_gc_pause_seconds_count{")
        .contains("jvm_memory_used_bytes{")
        .contains("lab_target_operations_per_second{application=\"" + app.label() + "\"}")
        .contains("application=\"" + app.label() + "\"");
    double first = operations(metrics).orElseThrow();
    await()
        .atMost(ADVANCE_TIMEOUT)
        .pollInterval(POLL_INTERVAL)
        .until(() -> operations(get(app, "/metrics").body()).orElse(0) > first);
  }

  private static OptionalDouble operations(String metrics) {
    Matcher m = OPERATIONS.matcher(metrics);
    return m.find() ? OptionalDouble.of(Double.parseDouble(m.group(1))) : OptionalDouble.empty();
  }

  private static HttpResponse<String> get(AppKind app, String path)
      throws IOException, InterruptedException {
    return HTTP.send(
        HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + PORTS.get(app) + path)).build(),
        HttpResponse.BodyHandlers.ofString(StandardCharsets.UTF_8));
  }

  private static Path labJar() {
    return Path.of(System.getProperty("lab.jar", "target/heapherd-lab.jar"));
  }

  private static int freePort() throws IOException {
    try (ServerSocket socket = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
      return socket.getLocalPort();
    }
  }
}
