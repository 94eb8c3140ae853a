package dev.heapherd.input;

import com.fasterxml.jackson.core.JacksonException;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import org.yaml.snakeyaml.error.Mark;
import org.yaml.snakeyaml.error.MarkedYAMLException;

/** Reads a YAML or JSON file (JSON is valid YAML) into a tree, with one-line errors. */
final class Documents {

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
    JsonNode tree;
    try {
      tree = MAPPER.readTree(text);
    } catch (JacksonException e) {
      throw malformed(name, e);
    }
    if (tree == null || tree.isMissingNode() || tree.isNull()) {
      throw new InputException(name, "", "is empty");
    }
    return Field.root(name, tree);
  }

  /**
   * The YAML scanner knows where the problem really is and what it is (a tab, an unclosed bracket);
   * Jackson's own location is that of the last good token, so prefer the scanner's.
   */
  private static InputException malformed(String file, JacksonException e) {
    String format = file.endsWith(".json") ? "JSON" : "YAML";
    for (Throwable t = e; t != null; t = t.getCause()) {
      if (t instanceof MarkedYAMLException marked && marked.getProblemMark() != null) {
        Mark mark = marked.getProblemMark();
        String context = marked.getContext() == null ? "" : " (" + marked.getContext() + ")";
        return new InputException(
            file,
            "line " + (mark.getLine() + 1) + ", column " + (mark.getColumn() + 1),
            "malformed " + format + ": " + firstLine(marked.getProblem()) + context);
      }
    }
    var at = e.getLocation();
    String where = at == null ? "" : "line " + at.getLineNr() + ", column " + at.getColumnNr();
    return new InputException(
        file, where, "malformed " + format + ": " + firstLine(e.getOriginalMessage()));
  }

  private static String firstLine(String message) {
    int newline = message.indexOf('\n');
    return newline < 0 ? message : message.substring(0, newline);
  }
}
