package dev.heapherd.input;

import com.fasterxml.jackson.core.JacksonException;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.Optional;
import org.yaml.snakeyaml.error.Mark;
import org.yaml.snakeyaml.error.MarkedYAMLException;

/** Reads a YAML or JSON file (JSON is valid YAML) into a tree, with one-line errors. */
public final class Documents {

  private static final YAMLMapper MAPPER =
      YAMLMapper.builder().enable(JsonParser.Feature.STRICT_DUPLICATE_DETECTION).build();

  private Documents() {}

  static Field read(Path file) throws InputException {
    String name = file.toString();
    String text;
    try {
      text = Files.readString(file);
    } catch (NoSuchFileException e) {
      throw new InputException(name, "", "no such file");
    } catch (IOException e) {
      throw new InputException(name, "", "cannot read: " + e.getMessage());
    }
    return parse(name, text, 1)
        .map(tree -> Field.root(name, tree))
        .orElseThrow(() -> new InputException(name, "", "is empty"));
  }

  /**
   * Parses {@code text}, one YAML or JSON document that begins on line {@code startLine} of {@code
   * file}, so that errors name the line in the file; empty when it holds only comments or null.
   */
  public static Optional<JsonNode> parse(String file, String text, int startLine)
      throws InputException {
    JsonNode tree;
    try {
      tree = MAPPER.readTree(text);
    } catch (JacksonException e) {
      throw malformed(file, e, startLine);
    }
    if (tree == null || tree.isMissingNode() || tree.isNull()) {
      return Optional.empty();
    }
    return Optional.of(tree);
  }

  /**
   * The YAML scanner knows where the problem really is and what it is (a tab, an unclosed bracket);
   * Jackson's own location is that of the last good token, so prefer the scanner's.
   */
  private static InputException malformed(String file, JacksonException e, int startLine) {
    String format = file.endsWith(".json") ? "JSON" : "YAML";
    for (Throwable t = e; t != null; t = t.getCause()) {
      if (t instanceof MarkedYAMLException marked && marked.getProblemMark() != null) {
        Mark mark = marked.getProblemMark();
        String context = marked.getContext() == null ? "" : " (" + marked.getContext() + ")";
        return new InputException(
            file,
            "line " + (mark.getLine() + startLine) + ", column " + (mark.getColumn() + 1),
            "malformed " + format + ": " + firstLine(marked.getProblem()) + context);
      }
    }
    var at = e.getLocation();
    String where =
        at == null
            ? ""
            : "line " + (at.getLineNr() + startLine - 1) + ", column " + at.getColumnNr();
    return new InputException(
        file, where, "malformed " + format + ": " + firstLine(e.getOriginalMessage()));
  }

  private static String firstLine(String message) {
    int newline = message.indexOf('\n');
    return newline < 0 ? message : message.substring(0, newline);
  }
}
