package dev.heapherd.lab;

import picocli.CommandLine;
import picocli.CommandLine.Command;

/** The lab's command line: {@code serve} runs one service, {@code run} measures the fleet. */
@Command(
    name = "heapherd-lab",
    mixinStandardHelpOptions = true,
    description = "Services on real libraries doing paced work, and a runner measuring GC time.",
    subcommands = {ServeCommand.class, RunCommand.class})
public final class LabMain {

  /** Exit code for a failure at run time. */
  static final int EXIT_FAILED = 1;

  /** Exit code for bad usage, as picocli and command-line tools conventionally use. */
  static final int EXIT_USAGE = 2;

  private LabMain() {}

  /** Runs the command line and exits with its code. */
  public static void main(String[] args) {
    System.exit(new CommandLine(new LabMain()).execute(args));
  }
}
