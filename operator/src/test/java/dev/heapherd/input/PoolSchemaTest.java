package dev.heapherd.input;

import static dev.heapherd.cli.PlanInputs.POOL;
import static dev.heapherd.cli.PlanInputs.replaceOnce;
import static dev.heapherd.cli.PlanInputs.write;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Pool files checked against the generated CRD's schema: what the API server would refuse in a
 * resource is refused in a file, naming the field.
 */
class PoolSchemaTest {

  @TempDir Path dir;

  @Test
  void theExamplePoolFitsTheSchema() throws Exception {
    assertThat(PoolFileReader.read(write(dir, "pool.yaml", POOL)).name()).isNotEmpty();
  }

  @Test
  void aQuantityLongerThanTheSchemaAllowsIsRefusedLikeTheApiServerWould() throws Exception {
    // 33 characters: a size the reader can parse, longer than the CRD allows (Patterns).
    String longFloor = "0".repeat(28) + "256Mi";
    Path pool =
        write(dir, "pool.yaml", replaceOnce(POOL, "heapFloor: 256Mi", "heapFloor: " + longFloor));

    assertThatThrownBy(() -> PoolFileReader.read(pool))
        .isInstanceOf(InputException.class)
        .hasMessageStartingWith(pool + ": spec.defaults.heapFloor: ")
        .hasMessageContaining("the HeapPool schema");
  }

  @ParameterizedTest
  @CsvSource({
    "$.spec.overrides[1].name, spec.overrides[1].name",
    "/spec/overrides/1/name, spec.overrides[1].name",
    "/spec/selector/matchLabels/heapherd.dev~1pool, spec.selector.matchLabels.heapherd.dev/pool",
    "$, ''",
  })
  void locationsReadAsTheReadersFieldPaths(String location, String path) {
    assertThat(PoolSchema.fieldPath(location)).isEqualTo(path);
  }
}
