package dev.heapherd.synthetic;

import static org.awaitility.Awaitility.await;

import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.UncheckedIOException;
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
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The synthetic workload started as a separate {@code java} process for a test; stdout and stderr
 * go to files so a chatty agent can never block it, and the test stops it by its pid.
 */
final class WorkloadProcess implements AutoCloseable {

  /** Exit code of a JVM ended by SIGTERM: 128 + signal 15. */
  static final int EXIT_ON_SIGTERM = 143;

  /** Time to start the JVM and build the live set; the agent's startup dominates on 2 cores. */
  static final Duration READY_TIMEOUT = Duration.ofSeconds(60);

  /** Time a JVM gets to run its shutdown hooks after SIGTERM before it is killed. */
  static final Duration STOP_TIMEOUT = Duration.ofSeconds(15);

  private static final Pattern READY_LINE =
      Pattern.compile("synthetic-workload ready port=(\\d+) pid=(\\d+)");
  private static final Duration POLL_INTERVAL = Duration.ofMillis(200);
  private static final Duration HTTP_TIMEOUT = Duration.ofSeconds(10);
  private static final ObjectMapper JSON = new ObjectMapper();

  private final Process process;
  private final Path stdout;
  private final Path stderr;
  private final HttpClient http =
      HttpClient.newBuilder()
          .connectTimeout(HTTP_TIMEOUT)
          .version(HttpClient.Version.HTTP_1_1)
          .build();
  private int port = -1;

  private WorkloadProcess(Process process, Path stdout, Path stderr) {
    this.process = process;
    this.stdout = stdout;
    this.stderr = stderr;
  }

  /**
   * Starts {@code java jvmFlags -jar workload.jar args} with the java of the running test and a
   * clean environment apart from {@code environment}.
   */
  static WorkloadProcess start(
      Path workDir, List<String> jvmFlags, List<String> args, Map<String, String> environment)
      throws IOException {
    List<String> command = new ArrayList<>();
    command.add(Path.of(System.getProperty("java.home"), "bin", "java").toString());
    command.addAll(jvmFlags);
    command.add("-jar");
    command.add(workloadJar().toString());
    command.addAll(args);
    ProcessBuilder builder = new ProcessBuilder(command).directory(workDir.toFile());
    // Variables from the test's own shell must not reach the workload's option parsing.
    builder
        .environment()
        .keySet()
        .removeIf(name -> name.startsWith("WORKLOAD_") || name.startsWith("OTEL_"));
    builder.environment().putAll(environment);
    Path stdout = workDir.resolve("stdout.log");
    Path stderr = workDir.resolve("stderr.log");
    builder.redirectOutput(stdout.toFile()).redirectError(stderr.toFile());
    return new WorkloadProcess(builder.start(), stdout, stderr);
  }

  static Path workloadJar() {
    return Path.of(System.getProperty("workload.jar", "target/synthetic-workload.jar"));
  }

  static Path otelAgentJar() {
    return Path.of(System.getProperty("otel.agent.jar", "target/otel/opentelemetry-javaagent.jar"));
  }

  /** A port on the loopback address that was free a moment ago. */
  static int freeLoopbackPort() throws IOException {
    try (ServerSocket socket = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
      return socket.getLocalPort();
    }
  }

  /** Waits for the ready line, checks its pid is this process's, and returns the HTTP port. */
  int awaitReady() {
    await("ready line on stdout")
        .atMost(READY_TIMEOUT)
        .pollInterval(POLL_INTERVAL)
        .failFast("workload exited early: " + this, () -> !process.isAlive())
        .until(() -> readyLine() != null);
    Matcher matcher = readyLine();
    if (Long.parseLong(matcher.group(2)) != process.pid()) {
      throw new AssertionError("ready line names another pid: " + matcher.group());
    }
    port = Integer.parseInt(matcher.group(1));
    return port;
  }

  long pid() {
    return process.pid();
  }

  Process process() {
    return process;
  }

  Truth truth() {
    try {
      return JSON.readValue(get(port, "/truth").body(), Truth.class);
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  HttpResponse<String> get(int targetPort, String path) {
    HttpRequest request =
        HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + targetPort + path))
            .timeout(HTTP_TIMEOUT)
            .build();
    try {
      return http.send(request, HttpResponse.BodyHandlers.ofString(StandardCharsets.UTF_8));
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException(e);
    }
  }

  /** Sends SIGTERM to this process's pid, kills it if it lingers, and returns its exit code. */
  int stop() throws InterruptedException {
    process.destroy();
    if (!process.waitFor(STOP_TIMEOUT.toMillis(), TimeUnit.MILLISECONDS)) {
      process.destroyForcibly();
      process.waitFor(STOP_TIMEOUT.toMillis(), TimeUnit.MILLISECONDS);
    }
    return process.exitValue();
  }

  String stdout() {
    return read(stdout);
  }

  String stderr() {
    return read(stderr);
  }

  @Override
  public void close() {
    if (process.isAlive()) {
      try {
        stop();
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
        process.destroyForcibly();
      }
    }
  }

  @Override
  public String toString() {
    return "pid " + process.pid() + "\n--- stdout\n" + stdout() + "\n--- stderr\n" + stderr();
  }

  private Matcher readyLine() {
    Matcher matcher = READY_LINE.matcher(stdout());
    return matcher.find() ? matcher : null;
  }

  private static String read(Path file) {
    try {
      return Files.exists(file) ? Files.readString(file, StandardCharsets.UTF_8) : "";
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }
}
