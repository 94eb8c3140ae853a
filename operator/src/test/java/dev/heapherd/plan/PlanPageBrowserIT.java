package dev.heapherd.plan;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.heapherd.cli.PlanRun;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;

/**
 * The review page of the bundled example opened in a real headless browser (Debian's chromium): it
 * loads without console errors, the figures in the page the browser built are those of {@code plan
 * -o json}, and a screenshot is kept as a test artifact.
 */
class PlanPageBrowserIT {

  private static final Path CHROMIUM = Path.of("/usr/bin/chromium");
  private static final Path EXAMPLES = Path.of("..", "docs", "examples");
  private static final Path ARTIFACTS = Path.of("target", "review-page");

  /** A cold browser start on the 2-core build machine takes a few seconds; this is ample. */
  private static final long BROWSER_TIMEOUT_SECONDS = 120;

  private static final Pattern MARK =
      Pattern.compile("data-mark=\"([a-z ]+)\" data-heap-bytes=\"(\\d+)\"");

  @Test
  void thePageLoadsCleanlyAndShowsThePlansFigures() throws Exception {
    assertThat(CHROMIUM).as("Debian's chromium (./dev.sh test installs it)").isExecutable();
    String[] plan = {
      "plan",
      "--pool",
      EXAMPLES.resolve("pool.yaml").toString(),
      "--snapshot",
      EXAMPLES.resolve("snapshot.yaml").toString()
    };
    JsonNode json = new ObjectMapper().readTree(run(plan, "-o", "json"));
    Files.createDirectories(ARTIFACTS);
    Path page = Files.writeString(ARTIFACTS.resolve("plan.html"), run(plan, "-o", "html"));
    Path screenshot = ARTIFACTS.resolve("plan.png");
    Files.deleteIfExists(screenshot);

    Browser dom = browse(page, "--dump-dom");
    Browser shot =
        browse(page, "--screenshot=" + screenshot.toAbsolutePath(), "--window-size=1000,2200");

    assertThat(dom.exitCode()).as("chromium --dump-dom; stderr: %s", dom.err()).isZero();
    assertThat(shot.exitCode()).as("chromium --screenshot; stderr: %s", shot.err()).isZero();
    // Page problems reach the console log as CONSOLE lines; the browser's own start-up noise
    // (no D-Bus in a container) is not about the page.
    for (Browser b : List.of(dom, shot)) {
      assertThat(b.err().lines().filter(l -> l.contains("CONSOLE")).toList()).isEmpty();
    }
    assertThat(Files.size(screenshot)).isPositive();
    String built = dom.out();
    for (JsonNode w : json.path("workloads")) {
      String name = w.path("name").asText();
      int at = built.indexOf("data-workload=\"" + name + "\"");
      assertThat(at).as("section of %s", name).isNotNegative();
      List<String> marks = new ArrayList<>();
      Matcher m = MARK.matcher(built.substring(at));
      for (int i = 0; i < 4 && m.find(); i++) {
        marks.add(m.group(1) + "=" + m.group(2));
      }
      assertThat(marks)
          .as("marked heaps of %s", name)
          .containsExactly(
              "today=" + w.path("currentHeapBytes").asLong(),
              "proposal=" + w.path("heapBytes").asLong(),
              "linear rule=" + w.path("comparison").path("linearRuleHeapBytes").asLong(),
              "equal split=" + w.path("comparison").path("equalSplitHeapBytes").asLong());
    }
    JsonNode f = json.path("predictedGcSecondsPerHour");
    for (String split : List.of("current", "proposed", "linearRule", "equalSplit")) {
      assertThat(built)
          .contains(
              String.format(
                  Locale.ROOT, "data-seconds-per-hour=\"%.2f\"", f.path(split).asDouble()));
    }
  }

  private static String run(String[] plan, String... format) {
    String[] args = new String[plan.length + format.length];
    System.arraycopy(plan, 0, args, 0, plan.length);
    System.arraycopy(format, 0, args, plan.length, format.length);
    return PlanRun.run(args).assertSucceeded();
  }

  /** What one headless browser run printed. */
  private record Browser(int exitCode, String out, String err) {}

  private static Browser browse(Path page, String... options) throws Exception {
    List<String> command =
        new ArrayList<>(
            List.of(
                CHROMIUM.toString(),
                "--headless",
                // The sandbox needs user namespaces a build container may not have; the page is
                // our own and loads nothing.
                "--no-sandbox",
                "--disable-gpu",
                "--hide-scrollbars",
                "--enable-logging=stderr",
                "--user-data-dir=" + ARTIFACTS.resolve("profile").toAbsolutePath()));
    command.addAll(List.of(options));
    command.add(page.toAbsolutePath().toUri().toString());
    Path out = Files.createTempFile(ARTIFACTS, "browser", ".out");
    Path err = Files.createTempFile(ARTIFACTS, "browser", ".err");
    Process p =
        new ProcessBuilder(command)
            .redirectOutput(out.toFile())
            .redirectError(err.toFile())
            .start();
    try {
      if (!p.waitFor(BROWSER_TIMEOUT_SECONDS, TimeUnit.SECONDS)) {
        throw new AssertionError("chromium did not finish in " + BROWSER_TIMEOUT_SECONDS + " s");
      }
    } finally {
      // Its helper processes first, by pid, while they can still be found as its children.
      p.descendants().forEach(ProcessHandle::destroyForcibly);
      p.destroyForcibly();
    }
    return new Browser(p.exitValue(), Files.readString(out), Files.readString(err));
  }
}
