package dev.heapherd;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;

/**
 * Which package may import which (DEVELOPERS.md, "Layers"), read from the import lines of
 * operator/src/main: a new import across a layer fails here before it spreads.
 */
class LayeringTest {

  private static final Path MAIN = Path.of("src/main/java/dev/heapherd");
  private static final Pattern IMPORT =
      Pattern.compile("^import (?:static )?([\\w.*]+);", Pattern.MULTILINE);
  private static final String OURS = "dev.heapherd.";

  /** The operator's entry points, the only reconcile types the command line may start. */
  private static final Set<String> RECONCILE_ENTRY_POINTS =
      Set.of(
          "dev.heapherd.reconcile.ApiRequestCounter",
          "dev.heapherd.reconcile.OperatorRuntime",
          "dev.heapherd.reconcile.PrometheusMetricsSource");

  @Test
  void theEngineImportsNothingOutsideTheJdk() {
    assertThat(imports("engine"))
        .allSatisfy(i -> assertThat(i).matches("(java|dev\\.heapherd\\.engine)\\..*"));
  }

  @Test
  void renderAndTheCommandLineNeverReachIntoTheReconciler() {
    assertThat(imports("render")).noneMatch(i -> i.startsWith(OURS + "reconcile."));
    assertThat(imports("cli"))
        .filteredOn(i -> i.startsWith(OURS + "reconcile."))
        .allSatisfy(i -> assertThat(RECONCILE_ENTRY_POINTS).contains(i));
  }

  @Test
  void sharedLayersImportNeitherTheReconcilerNorTheCommands() {
    for (String shared :
        List.of("api", "input", "metrics", "plan", "observe", "proposal", "rollout", "engine")) {
      assertThat(imports(shared))
          .as("imports of %s", shared)
          .noneMatch(
              i ->
                  i.startsWith(OURS + "reconcile.")
                      || i.startsWith(OURS + "render.")
                      || i.startsWith(OURS + "cli."));
    }
  }

  @Test
  void theReconcilerNeverImportsTheCommandsOrRender() {
    assertThat(imports("reconcile"))
        .noneMatch(i -> i.startsWith(OURS + "render.") || i.startsWith(OURS + "cli."));
  }

  /** Every imported type (static imports by their class) of one package's sources. */
  private static List<String> imports(String layer) {
    Path dir = MAIN.resolve(layer);
    assertThat(dir).as("package folder").isDirectory();
    try (Stream<Path> files = Files.walk(dir)) {
      return files
          .filter(f -> f.toString().endsWith(".java"))
          .flatMap(LayeringTest::importsOf)
          .toList();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  private static Stream<String> importsOf(Path file) {
    try {
      Matcher m = IMPORT.matcher(Files.readString(file));
      Stream.Builder<String> out = Stream.builder();
      while (m.find()) {
        out.add(m.group(1));
      }
      return out.build();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }
}
