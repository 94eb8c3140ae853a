package dev.heapherd.input;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import com.networknt.schema.Error;
import com.networknt.schema.Schema;
import com.networknt.schema.SchemaRegistry;
import com.networknt.schema.dialect.Dialect;
import com.networknt.schema.dialect.Dialects;
import com.networknt.schema.keyword.NonValidationKeyword;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.util.List;

/**
 * The HeapPool CRD's schema, generated from the {@code api} types, applied to pool files: the
 * structural rules of a live resource (types, patterns, ranges, sizes) hold for a file too.
 */
final class PoolSchema {

  /** Where the CRD generator puts the CRD in the jar (crds/ holds the checked-in copy). */
  private static final String CRD_RESOURCE = "/META-INF/fabric8/heappools.heapherd.dev-v1.yml";

  /**
   * A CRD's schema is an OpenAPI 3.0 schema (Kubernetes API reference, CustomResourceDefinition);
   * its CEL rules are Kubernetes' own and the reader checks what they say, so they are skipped.
   */
  private static final Schema SCHEMA =
      SchemaRegistry.withDefaultDialect(
              Dialect.builder(Dialects.getOpenApi30())
                  .keyword(new NonValidationKeyword("x-kubernetes-validations"))
                  .build())
          .getSchema(openApiSchema());

  private static final String TYPE = "type";
  private static final String STRING = "string";

  private PoolSchema() {}

  /** Refuses {@code document} with its first schema violation, naming {@code file}. */
  static void check(String file, JsonNode document) throws InputException {
    List<Error> errors = SCHEMA.validate(document).stream().filter(e -> !numberAsText(e)).toList();
    if (!errors.isEmpty()) {
      Error first = errors.get(0);
      String where = fieldPath(first.getInstanceLocation().toString());
      throw new InputException(file, where, problem(first, where));
    }
  }

  /**
   * A YAML number where the resource wants text ({@code limitMargin: 0}, {@code memoryPerGiBHour:
   * 0.0045}): a file may leave it unquoted, as the reader reads both alike and checks the value; a
   * resource sent to the API server needs the quotes.
   */
  private static boolean numberAsText(Error error) {
    JsonNode value = error.getInstanceNode();
    JsonNode schema = error.getSchemaNode();
    String wanted =
        schema == null ? "" : schema.isTextual() ? schema.asText() : schema.path(TYPE).asText();
    return TYPE.equals(error.getKeyword())
        && value != null
        && value.isNumber()
        && STRING.equals(wanted);
  }

  /**
   * {@code $.spec.overrides[1].name} or {@code /spec/overrides/1/name} as spec.overrides[1].name.
   */
  static String fieldPath(String location) {
    if (location.startsWith("/")) {
      StringBuilder out = new StringBuilder();
      for (String part : location.substring(1).split("/", -1)) {
        if (part.matches("\\d+")) {
          out.append('[').append(part).append(']');
        } else {
          out.append(out.length() == 0 ? "" : ".")
              .append(part.replace("~1", "/").replace("~0", "~"));
        }
      }
      return out.toString();
    }
    return location.startsWith("$.") ? location.substring(2) : location.replaceFirst("^\\$", "");
  }

  private static String problem(Error error, String where) {
    String message = error.getMessage();
    // The validator may start its message with the location already named.
    for (String prefix : List.of(error.getInstanceLocation() + ": ", where + ": ")) {
      if (!where.isEmpty() && message.startsWith(prefix)) {
        message = message.substring(prefix.length());
      }
    }
    return message + " (the HeapPool schema)";
  }

  private static JsonNode openApiSchema() {
    try (InputStream in = PoolSchema.class.getResourceAsStream(CRD_RESOURCE)) {
      if (in == null) {
        throw new IllegalStateException(
            "the HeapPool CRD is missing from the jar: " + CRD_RESOURCE);
      }
      return new YAMLMapper().readTree(in).at("/spec/versions/0/schema/openAPIV3Schema");
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }
}
