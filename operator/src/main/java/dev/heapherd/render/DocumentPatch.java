package dev.heapherd.render;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLGenerator;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import dev.heapherd.input.Documents;
import dev.heapherd.input.InputException;
import java.io.StringReader;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Optional;
import java.util.Set;
import java.util.regex.Pattern;
import org.yaml.snakeyaml.DumperOptions.ScalarStyle;
import org.yaml.snakeyaml.Yaml;
import org.yaml.snakeyaml.nodes.MappingNode;
import org.yaml.snakeyaml.nodes.Node;
import org.yaml.snakeyaml.nodes.NodeTuple;
import org.yaml.snakeyaml.nodes.ScalarNode;
import org.yaml.snakeyaml.nodes.SequenceNode;

/**
 * Sets string values in one manifest document. Where every value to change is already written as a
 * one-line scalar, only those scalars are replaced in the text, so comments and layout stay as they
 * were; otherwise (a field to add, a block scalar) the document is written anew from its parsed
 * content. Either way the result is parsed again and must equal the intended tree.
 */
final class DocumentPatch {

  /**
   * One value to set.
   *
   * @param path field names and list indices from the document's root; an index equal to the list's
   *     size appends an entry
   * @param value the string to write there
   */
  record Edit(List<Object> path, String value) {}

  /**
   * The document's new text.
   *
   * @param text the new text, equal to the old one when nothing changed
   * @param rewritten the whole document was written anew, its comments and layout not kept
   */
  record Result(String text, boolean rewritten) {}

  /** Styles of scalars that sit on one line and can be replaced in place. */
  private static final Set<ScalarStyle> IN_PLACE_STYLES =
      Set.of(ScalarStyle.PLAIN, ScalarStyle.SINGLE_QUOTED, ScalarStyle.DOUBLE_QUOTED);

  /**
   * Values written plain: tokens of letters, digits and {@code _ . / = + - :} joined by single
   * spaces, as in {@code 1536Mi} or {@code -XX:+UseG1GC -Xmx3g}. Anything else (a colon before a
   * blank, a '#', flow indicators) is double-quoted.
   */
  private static final Pattern PLAIN =
      Pattern.compile("[A-Za-z0-9_./=+][A-Za-z0-9_./=+:-]*|-[A-Za-z0-9_./=+:-]+");

  /** A new document's leading comment lines are kept, such as a generator's "# Source:" line. */
  private static final Pattern LEADING_COMMENTS = Pattern.compile("\\A([ \\t]*(#[^\\n]*)?\\n)*");

  private static final String CRLF = "\r\n";

  private static final YAMLMapper YAML =
      YAMLMapper.builder()
          .disable(YAMLGenerator.Feature.WRITE_DOC_START_MARKER)
          .enable(YAMLGenerator.Feature.MINIMIZE_QUOTES)
          // A label such as version: "2" must stay a string, as Kubernetes requires.
          .enable(YAMLGenerator.Feature.ALWAYS_QUOTE_NUMBERS_AS_STRINGS)
          .build();

  private static final ObjectMapper JSON = new ObjectMapper();

  private DocumentPatch() {}

  /** Applies {@code edits} to {@code document} of {@code file}. */
  static Result apply(ManifestFile file, ManifestFile.Document document, List<Edit> edits) {
    JsonNode before = document.tree().orElseThrow();
    JsonNode after = before.deepCopy();
    List<Edit> needed = new ArrayList<>();
    for (Edit e : edits) {
      if (!e.value().equals(textAt(before, e.path()))) {
        needed.add(e);
        set(after, e.path(), e.value());
      }
    }
    if (needed.isEmpty()) {
      return new Result(document.text(), false);
    }
    Optional<String> inPlace = replaceScalars(document.text(), needed, file.json());
    if (inPlace.isPresent() && after.equals(reparsed(file, inPlace.get()))) {
      return new Result(inPlace.get(), false);
    }
    String written = rewrite(document, after, file.json());
    if (!after.equals(reparsed(file, written))) {
      throw new IllegalStateException(
          "a document of " + file.name() + " written anew does not read back as intended");
    }
    return new Result(written, true);
  }

  /** The text at {@code path}, null when there is none or it is not a string. */
  private static String textAt(JsonNode root, List<Object> path) {
    JsonNode node = root;
    for (Object step : path) {
      node = step instanceof Integer i ? node.path(i) : node.path((String) step);
    }
    return node.isTextual() ? node.asText() : null;
  }

  /** Sets the string at {@code path}, creating the mappings and list entry on the way. */
  private static void set(JsonNode root, List<Object> path, String value) {
    JsonNode node = root;
    for (int i = 0; i < path.size() - 1; i++) {
      boolean list = path.get(i + 1) instanceof Integer;
      if (node instanceof ObjectNode o) {
        String key = (String) path.get(i);
        JsonNode child = o.get(key);
        if (child == null || child.isNull()) {
          child = list ? o.putArray(key) : o.putObject(key);
        }
        node = child;
      } else {
        ArrayNode a = (ArrayNode) node;
        int index = (Integer) path.get(i);
        node = index < a.size() ? a.get(index) : a.addObject();
      }
    }
    ((ObjectNode) node).put((String) path.get(path.size() - 1), value);
  }

  /** The text with each edited scalar replaced; empty when some edit has no one-line scalar. */
  private static Optional<String> replaceScalars(String text, List<Edit> edits, boolean json) {
    Node root;
    try {
      root = new Yaml().compose(new StringReader(text));
    } catch (RuntimeException e) {
      // The document parsed once already; a second parser's objection just means rewrite it.
      return Optional.empty();
    }
    List<Replacement> replacements = new ArrayList<>();
    for (Edit e : edits) {
      Optional<ScalarNode> scalar = scalarAt(root, e.path());
      if (scalar.isEmpty() || !IN_PLACE_STYLES.contains(scalar.get().getScalarStyle())) {
        return Optional.empty();
      }
      // Marks count code points; the text is indexed in UTF-16 units.
      int start = text.offsetByCodePoints(0, scalar.get().getStartMark().getIndex());
      int end = text.offsetByCodePoints(0, scalar.get().getEndMark().getIndex());
      replacements.add(
          new Replacement(start, end, scalarText(e.value(), scalar.get().getScalarStyle(), json)));
    }
    replacements.sort(Comparator.comparingInt(Replacement::start).reversed());
    StringBuilder out = new StringBuilder(text);
    int limit = text.length();
    for (Replacement r : replacements) {
      if (r.end() > limit) {
        // Two edits share a scalar (a YAML alias): not a case to edit in place.
        return Optional.empty();
      }
      out.replace(r.start(), r.end(), r.text());
      limit = r.start();
    }
    return Optional.of(out.toString());
  }

  private record Replacement(int start, int end, String text) {}

  private static Optional<ScalarNode> scalarAt(Node root, List<Object> path) {
    Node node = root;
    for (Object step : path) {
      Node next = null;
      if (step instanceof Integer i && node instanceof SequenceNode s && i < s.getValue().size()) {
        next = s.getValue().get(i);
      } else if (step instanceof String key && node instanceof MappingNode m) {
        for (NodeTuple t : m.getValue()) {
          if (t.getKeyNode() instanceof ScalarNode k && key.equals(k.getValue())) {
            next = t.getValueNode();
          }
        }
      }
      if (next == null) {
        return Optional.empty();
      }
      node = next;
    }
    return node instanceof ScalarNode s ? Optional.of(s) : Optional.empty();
  }

  /** {@code value} written in the style of the scalar it replaces, where that is safe. */
  private static String scalarText(String value, ScalarStyle style, boolean json) {
    if (!json && style == ScalarStyle.PLAIN && plain(value)) {
      return value;
    }
    if (!json && style == ScalarStyle.SINGLE_QUOTED && value.chars().noneMatch(c -> c < ' ')) {
      return "'" + value.replace("'", "''") + "'";
    }
    try {
      // A JSON string is also a YAML double-quoted scalar with the same value.
      return JSON.writeValueAsString(value);
    } catch (JsonProcessingException e) {
      throw new IllegalStateException("a string always serialises", e);
    }
  }

  private static boolean plain(String value) {
    for (String token : value.split(" ", -1)) {
      if (!PLAIN.matcher(token).matches() || token.endsWith(":")) {
        return false;
      }
    }
    return true;
  }

  /** The document written anew, after its leading comment lines. */
  private static String rewrite(ManifestFile.Document document, JsonNode tree, boolean json) {
    String text = document.text();
    String lf = text.replace(CRLF, "\n");
    String comments =
        lf.substring(0, lf.length() - LEADING_COMMENTS.matcher(lf).replaceFirst("").length());
    if (comments.isEmpty() && !document.marker().isEmpty()) {
      // The new content must not run on from the marker's line.
      comments = "\n";
    }
    String body;
    try {
      body =
          json
              ? JSON.writerWithDefaultPrettyPrinter().writeValueAsString(tree) + "\n"
              : YAML.writeValueAsString(tree);
    } catch (JsonProcessingException e) {
      throw new IllegalStateException("a parsed document always serialises", e);
    }
    String out = comments + body;
    return text.contains(CRLF) ? out.replace("\n", CRLF) : out;
  }

  private static JsonNode reparsed(ManifestFile file, String text) {
    try {
      return Documents.parse(file.name(), text, 1).orElse(null);
    } catch (InputException e) {
      return null;
    }
  }
}
