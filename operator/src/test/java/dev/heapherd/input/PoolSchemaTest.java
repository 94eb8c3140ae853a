package dev.heapherd.input;

import static dev.heapherd.cli.PlanInputs.POOL;
import static dev.heapherd.cli.PlanInputs.replaceOnce;
import static dev.heapherd.cli.PlanInputs.write;
import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
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

  /**
   * A misspelt field is named with the fields the api types declare, which are the fields the
   * generated CRD (crds/, checked against the build) lists: one description of the resource.
   */
  @ParameterizedTest
  @CsvSource({
    "'kind: HeapPool', 'kind: HeapPool\\nknd: HeapPool', ''",
    "'mode: DryRun', 'mdoe: DryRun', spec",
    "'heapFloor: 256Mi', 'heapFlor: 256Mi', spec.defaults",
    "'weight: 3', 'wieght: 3', spec.overrides",
  })
  void anUnknownFieldIsNamedWithTheFieldsTheCrdLists(String from, String to, String where)
      throws Exception {
    Path pool = write(dir, "pool.yaml", replaceOnce(POOL, from, to.replace("\\n", "\n")));
    JsonNode schema =
        new YAMLMapper()
            .readTree(Path.of("../crds/heappools.heapherd.dev-v1.yml").toFile())
            .at("/spec/versions/0/schema/openAPIV3Schema");
    for (String part : where.isEmpty() ? new String[0] : where.split("\\.")) {
      schema = schema.at("/properties/" + part);
      schema = schema.has("items") ? schema.get("items") : schema;
    }
    List<String> fields = new ArrayList<>();
    schema.get("properties").fieldNames().forEachRemaining(fields::add);
    if (where.isEmpty()) {
      // Every object's own fields, which a CRD's schema leaves out (Kubernetes API conventions).
      fields.addAll(List.of("apiVersion", "kind", "metadata"));
    }
    Collections.sort(fields);

    assertThatThrownBy(() -> PoolFileReader.read(pool))
        .isInstanceOf(InputException.class)
        .hasMessageEndingWith(
            ": unknown field (expected one of " + String.join(", ", fields) + ")");
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
