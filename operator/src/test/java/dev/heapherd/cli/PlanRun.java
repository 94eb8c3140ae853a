package dev.heapherd.cli;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import picocli.CommandLine;

/** One in-process run of the command line: its exit code and what it printed. */
public record PlanRun(int exitCode, String out, String err) {

  /** Runs {@code heapherd args...}. */
  public static PlanRun run(String... args) {
    StringWriter out = new StringWriter();
    StringWriter err = new StringWriter();
    CommandLine cli = Main.commandLine();
    cli.setOut(new PrintWriter(out, true));
    cli.setErr(new PrintWriter(err, true));
    int exitCode = cli.execute(args);
    return new PlanRun(exitCode, out.toString(), err.toString());
  }

  /** Runs {@code heapherd plan --pool pool --snapshot snapshot options...}. */
  public static PlanRun plan(Path pool, Path snapshot, String... options) {
    List<String> args =
        new ArrayList<>(
            List.of("plan", "--pool", pool.toString(), "--snapshot", snapshot.toString()));
    args.addAll(List.of(options));
    return run(args.toArray(String[]::new));
  }

  /** Asserts exit 0 with nothing on stderr and returns stdout. */
  public String assertSucceeded() {
    assertThat(exitCode).as("exit code; stderr: %s", err).isZero();
    assertThat(err).as("stderr").isEmpty();
    return out;
  }

  /**
   * Asserts that bad input was rejected: exit 2, nothing on stdout, and one line on stderr that
   * reads {@code file: where: problem} without any trace of a Java exception.
   *
   * @param where the field path or the line and column, empty when the whole file is at fault
   * @param problem a part of the problem's wording, empty when any wording will do
   */
  public void assertRejected(Path file, String where, String problem) {
    assertThat(exitCode).as("exit code; stdout: %s; stderr: %s", out, err).isEqualTo(2);
    assertThat(out).as("stdout").isEmpty();
    assertThat(err.lines()).as("stderr lines of %s", err).hasSize(1);
    String prefix = where.isEmpty() ? file + ": " : file + ": " + where + ": ";
    assertThat(err)
        .as("stderr")
        .contains(prefix)
        .contains(problem)
        .doesNotContain("Exception")
        .doesNotContain("at dev.")
        .endsWith(System.lineSeparator());
  }
}
