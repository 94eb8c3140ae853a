package dev.heapherd.cli;

import dev.heapherd.input.ErrorText;
import picocli.CommandLine;
import picocli.CommandLine.Command;

/** Entry point of the heapherd jar. */
@Command(
    name = "heapherd",
    mixinStandardHelpOptions = true,
    versionProvider = Main.Version.class,
    description = "Divides a memory budget among JVM workloads and sizes their heaps and limits.",
    subcommands = {
      PlanCommand.class,
      SnapshotCommand.class,
      RenderCommand.class,
      OperatorCommand.class
    })
public final class Main implements Runnable {

  /** Exit code for bad input: usage errors and invalid files alike. */
  public static final int EXIT_BAD_INPUT = 2;

  /**
   * Exit code of render when it changed manifests (with --check: would change them), so a pipeline
   * can tell "changes to review" from "nothing to do" (0) and from failures (1, 2).
   */
  public static final int EXIT_CHANGES = 3;

  /** Exit code when no workload could be measured well enough (all held, reasons on stderr). */
  public static final int EXIT_NOTHING_MEASURED = 4;

  /** Exit code for a failure that is not the input's fault. */
  public static final int EXIT_INTERNAL_ERROR = 1;

  @CommandLine.Spec CommandLine.Model.CommandSpec spec;

  /** Environment variable naming the log level: error, warn, info (default) or debug. */
  static final String LOG_LEVEL_VARIABLE = "HEAPHERD_LOG_LEVEL";

  /** The system property slf4j-simple reads its default level from (its documentation). */
  private static final String SIMPLE_LOGGER_LEVEL = "org.slf4j.simpleLogger.defaultLogLevel";

  /** Runs the command line and exits with its code. */
  public static void main(String[] args) {
    String level = System.getenv(LOG_LEVEL_VARIABLE);
    // Before any logger exists: slf4j-simple reads the level once, when it starts.
    if (level != null && !level.isBlank() && System.getProperty(SIMPLE_LOGGER_LEVEL) == null) {
      System.setProperty(SIMPLE_LOGGER_LEVEL, level.strip().toLowerCase(java.util.Locale.ROOT));
    }
    System.exit(commandLine().execute(args));
  }

  /** The configured command line, shared by {@link #main} and tests. */
  public static CommandLine commandLine() {
    CommandLine cli = new CommandLine(new Main());
    // The last of a repeated option wins, so a wrapper (a pod's runtime, a script) can append an
    // override to arguments it was given.
    cli.setOverwrittenOptionsAllowed(true);
    cli.setExecutionExceptionHandler(
        (e, commandLine, parseResult) -> {
          // A failure here is a defect of ours; one line says so without a stack trace.
          commandLine
              .getErr()
              .println("heapherd: internal error: " + ErrorText.oneLine(e.toString()));
          return EXIT_INTERNAL_ERROR;
        });
    cli.setParameterExceptionHandler(
        (e, args) -> {
          // One line, like every other bad input; --help has the full usage.
          CommandLine failed = e.getCommandLine();
          failed
              .getErr()
              .println(
                  "heapherd: "
                      + ErrorText.oneLine(e.getMessage())
                      + " (see "
                      + failed.getCommandSpec().qualifiedName()
                      + " --help)");
          return EXIT_BAD_INPUT;
        });
    return cli;
  }

  @Override
  public void run() {
    spec.commandLine().usage(spec.commandLine().getOut());
  }

  /** Reports the version from the jar's manifest. */
  static final class Version implements CommandLine.IVersionProvider {
    @Override
    public String[] getVersion() {
      String version = Main.class.getPackage().getImplementationVersion();
      return new String[] {"heapherd " + (version == null ? "development build" : version)};
    }
  }
}
