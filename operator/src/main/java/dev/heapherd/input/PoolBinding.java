package dev.heapherd.input;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonMappingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.exc.UnrecognizedPropertyException;
import com.fasterxml.jackson.databind.introspect.BeanPropertyDefinition;
import com.fasterxml.jackson.databind.json.JsonMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.heapherd.api.HeapPool;
import io.fabric8.kubernetes.api.model.ObjectMeta;
import java.util.Collection;
import java.util.Optional;
import java.util.TreeSet;
import java.util.stream.Collectors;

/**
 * Binds a HeapPool document into the {@code api} types, the one description of which fields a pool
 * has: a field they do not declare is refused, named with the fields they do.
 */
final class PoolBinding {

  /** Unknown fields fail; the types' own defaults otherwise. */
  private static final ObjectMapper STRICT =
      JsonMapper.builder().enable(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES).build();

  /**
   * What {@code metadata} may carry: Kubernetes' ObjectMeta, which also keeps what {@code kubectl
   * get -o yaml} adds. ObjectMeta keeps any other key aside instead of failing, so it is checked
   * against this list after binding.
   */
  private static final Collection<String> METADATA_FIELDS =
      STRICT
          .getDeserializationConfig()
          .introspect(STRICT.constructType(ObjectMeta.class))
          .findProperties()
          .stream()
          .filter(BeanPropertyDefinition::couldDeserialize)
          .map(BeanPropertyDefinition::getName)
          .filter(name -> !name.equals("additionalProperties"))
          .collect(Collectors.toCollection(TreeSet::new));

  private PoolBinding() {}

  /**
   * Binds the document into a HeapPool. An unknown field is thrown at once; any other problem the
   * types have with it (a list where a mapping belongs, text in a number) is returned, for the
   * reader's checks to name in their own words first.
   */
  static Optional<InputException> check(Field document) throws InputException {
    JsonNode tree = document.node();
    if (tree.isObject()) {
      // Status is the operator's, not the admin's, and a pool file may carry an old one.
      tree = ((ObjectNode) tree).deepCopy();
      ((ObjectNode) tree).remove("status");
    }
    HeapPool pool;
    try {
      pool = STRICT.treeToValue(tree, HeapPool.class);
    } catch (UnrecognizedPropertyException e) {
      throw new InputException(
          document.file(), path(e), "unknown field (expected one of " + sorted(e) + ")");
    } catch (JsonProcessingException e) {
      return Optional.of(new InputException(document.file(), path(e), e.getOriginalMessage()));
    }
    if (pool != null && pool.getMetadata() != null) {
      var extra =
          pool.getMetadata().getAdditionalProperties().keySet().stream().sorted().findFirst();
      if (extra.isPresent()) {
        throw new InputException(
            document.file(),
            "metadata." + extra.get(),
            "unknown field (expected one of " + String.join(", ", METADATA_FIELDS) + ")");
      }
    }
    return Optional.empty();
  }

  /** The field path of a binding error: {@code spec.overrides[1].name}. */
  private static String path(JsonMappingException e) {
    StringBuilder out = new StringBuilder();
    for (JsonMappingException.Reference r : e.getPath()) {
      if (r.getFieldName() != null) {
        out.append(out.length() == 0 ? "" : ".").append(r.getFieldName());
      } else if (r.getIndex() >= 0) {
        out.append('[').append(r.getIndex()).append(']');
      }
    }
    return out.toString();
  }

  private static String path(JsonProcessingException e) {
    return e instanceof JsonMappingException m ? path(m) : "";
  }

  private static String sorted(UnrecognizedPropertyException e) {
    return e.getKnownPropertyIds().stream()
        .map(Object::toString)
        .sorted()
        .collect(Collectors.joining(", "));
  }
}
