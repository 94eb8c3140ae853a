package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Quantity;
import io.fabric8.kubernetes.client.KubernetesClientException;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;
import java.util.concurrent.Callable;
import java.util.concurrent.CountDownLatch;
import java.util.regex.Pattern;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/** Entry point of the node agent jar. */
@Command(
    name = "node-agent",
    mixinStandardHelpOptions = true,
    description =
        "Register a node on a Kubernetes control plane, bind pending pods to it and run their"
            + " containers as local java processes on 127.0.0.1.")
public final class Main implements Callable<Integer> {

  /** Exit code for bad flags. */
  static final int EXIT_BAD_INPUT = 2;

  /** Exit code when the agent cannot start against the cluster. */
  static final int EXIT_FAILED = 1;

  /** A Node name must be a DNS subdomain (RFC 1123), as the API server validates it. */
  private static final Pattern NODE_NAME =
      Pattern.compile("[a-z0-9]([-a-z0-9]*[a-z0-9])?(\\.[a-z0-9]([-a-z0-9]*[a-z0-9])?)*");

  /** The longest DNS subdomain. */
  private static final int MAX_NODE_NAME = 253;

  @Option(names = "--kubeconfig", required = true, description = "Kubeconfig of the cluster.")
  Path kubeconfig;

  @Option(names = "--node-name", required = true, description = "Name of the Node to register.")
  String nodeName;

  @Option(
      names = "--state-dir",
      required = true,
      description = "Folder for pods' working folders and logs (pods/<namespace>_<pod>/).")
  Path stateDir;

  @Option(
      names = "--file-sd",
      description = "Prometheus file_sd JSON file listing every running container's port.")
  Path fileSd;

  @Option(
      names = "--workload-jar",
      description = "Jar run for images whose repository ends in synthetic-workload.")
  Path workloadJar;

  @Option(
      names = "--operator-jar",
      description = "Jar run for images whose repository ends in heapherd.")
  Path operatorJar;

  @Option(
      names = "--operator-image",
      description =
          "Image tarball (.tar, docker-archive layout) run for images whose repository ends in"
              + " heapherd, in the image's own root folder (needs the agent to run as root).")
  Path operatorImage;

  @Option(
      names = "--image",
      paramLabel = "SUFFIX=FILE[,port-arg=ARG][,ready-path=PATH]",
      description =
          "Jar, or image tarball (.tar), run for images whose repository ends in SUFFIX"
              + " (repeatable). ARG, holding {port}, tells the process its port; PATH answers 200"
              + " once it is ready.")
  List<String> images = new ArrayList<>();

  @Option(
      names = "--java",
      description = "java binary that runs the jars (default: the agent's own).")
  Path java;

  @Option(names = "--cpu", description = "CPU capacity to report (default: this machine's).")
  String cpu;

  @Option(
      names = "--memory",
      description = "Memory capacity to report, e.g. 8Gi (default: this machine's).")
  String memory;

  @Option(
      names = "--max-pods",
      defaultValue = "110",
      description = "Pod capacity to report (default: ${DEFAULT-VALUE}, the kubelet's).")
  int maxPods;

  @Option(
      names = "--max-back-off-seconds",
      defaultValue = "30",
      description = "Longest delay before restarting a container (default: ${DEFAULT-VALUE}).")
  long maxBackOffSeconds;

  @Option(
      names = "--max-grace-seconds",
      defaultValue = "10",
      description =
          "Cap on terminationGracePeriodSeconds before SIGKILL (default: ${DEFAULT-VALUE}).")
  long maxGraceSeconds;

  @Option(
      names = "--memory-enforcement",
      defaultValue = "auto",
      description = "auto, cgroup-v2 or rss-polling (default: ${DEFAULT-VALUE}).")
  String memoryEnforcement;

  @CommandLine.Spec CommandLine.Model.CommandSpec spec;

  /** Runs the agent until SIGTERM, then exits with its code. */
  public static void main(String[] args) {
    System.exit(commandLine().execute(args));
  }

  /** The configured command line, shared by {@link #main} and tests. */
  static CommandLine commandLine() {
    CommandLine cli = new CommandLine(new Main());
    cli.setExecutionExceptionHandler(
        (e, commandLine, parseResult) -> {
          // A failure here is a defect of ours; one line says so without a stack trace.
          commandLine.getErr().println("node-agent: internal error: " + firstLine(e.toString()));
          return EXIT_FAILED;
        });
    cli.setParameterExceptionHandler(
        (e, args) -> {
          e.getCommandLine()
              .getErr()
              .println("node-agent: " + e.getMessage() + " (see node-agent --help)");
          return EXIT_BAD_INPUT;
        });
    return cli;
  }

  @Override
  public Integer call() throws InterruptedException {
    PrintWriter err = spec.commandLine().getErr();
    AgentSettings settings;
    try {
      settings = settings();
    } catch (IllegalArgumentException e) {
      err.println("node-agent: " + e.getMessage());
      return EXIT_BAD_INPUT;
    }
    NodeAgent agent;
    try {
      agent = NodeAgent.start(settings);
    } catch (IllegalArgumentException e) {
      err.println("node-agent: " + e.getMessage());
      return EXIT_BAD_INPUT;
    } catch (IOException | KubernetesClientException | IllegalStateException e) {
      err.println("node-agent: cannot start: " + firstLine(rootMessage(e)));
      return EXIT_FAILED;
    }
    CountDownLatch stopped = new CountDownLatch(1);
    Runtime.getRuntime()
        .addShutdownHook(
            new Thread(
                () -> {
                  agent.close();
                  stopped.countDown();
                }));
    stopped.await();
    return 0;
  }

  /** The settings the flags describe; IllegalArgumentException names the bad flag. */
  AgentSettings settings() {
    if (nodeName.length() > MAX_NODE_NAME || !NODE_NAME.matcher(nodeName).matches()) {
      throw new IllegalArgumentException(
          "--node-name must be lower-case letters, digits, '-' and '.', got '" + nodeName + "'");
    }
    if (!Files.isReadable(kubeconfig)) {
      throw new IllegalArgumentException("--kubeconfig: cannot read " + kubeconfig);
    }
    List<ImageMapping> mappings = new ArrayList<>();
    if (workloadJar != null) {
      mappings.add(ImageMapping.workload(workloadJar));
    }
    if (operatorJar != null && operatorImage != null) {
      throw new IllegalArgumentException("give --operator-jar or --operator-image, not both");
    }
    if (operatorJar != null) {
      mappings.add(ImageMapping.operator(operatorJar));
    }
    if (operatorImage != null) {
      ImageMapping image = ImageMapping.operator(operatorImage);
      if (!image.archive()) {
        throw new IllegalArgumentException(
            "--operator-image must name an image tarball ending in "
                + ImageMapping.ARCHIVE_EXTENSION
                + ", got "
                + operatorImage);
      }
      mappings.add(image);
    }
    for (String image : images) {
      mappings.add(ImageMapping.parse(image));
    }
    if (mappings.isEmpty()) {
      throw new IllegalArgumentException(
          "give at least one of --workload-jar, --operator-jar, --operator-image or --image");
    }
    if (maxPods < 1) {
      throw new IllegalArgumentException("--max-pods must be at least 1, got " + maxPods);
    }
    if (maxBackOffSeconds < 1) {
      throw new IllegalArgumentException(
          "--max-back-off-seconds must be at least 1, got " + maxBackOffSeconds);
    }
    if (maxGraceSeconds < 0) {
      throw new IllegalArgumentException(
          "--max-grace-seconds must be 0 or more, got " + maxGraceSeconds);
    }
    return new AgentSettings(
        kubeconfig,
        nodeName,
        stateDir,
        Optional.ofNullable(fileSd),
        mappings,
        java == null ? AgentSettings.currentJava() : java,
        cpu == null ? AgentSettings.machineCpu() : quantity("--cpu", cpu),
        memory == null ? AgentSettings.machineMemory() : quantity("--memory", memory),
        maxPods,
        Duration.ofSeconds(maxBackOffSeconds),
        Duration.ofSeconds(maxGraceSeconds),
        MemoryEnforcement.Mode.fromFlag(memoryEnforcement));
  }

  private static Quantity quantity(String flag, String text) {
    try {
      Quantity quantity = new Quantity(text);
      Quantity.getAmountInBytes(quantity);
      return quantity;
    } catch (IllegalArgumentException e) {
      throw new IllegalArgumentException(
          flag + " must be a Kubernetes quantity such as 2, 500m or 8Gi, got '" + text + "'");
    }
  }

  /** The first line of {@code text}: parser messages run over several. */
  static String firstLine(String text) {
    int end = text.indexOf('\n');
    return end < 0 ? text : text.substring(0, end);
  }

  /** The innermost cause's message, or its type when it has none. */
  static String rootMessage(Throwable e) {
    Throwable t = e;
    while (t.getCause() != null) {
      t = t.getCause();
    }
    return t.getMessage() == null ? t.getClass().getSimpleName() : t.getMessage();
  }
}
