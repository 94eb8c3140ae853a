package dev.heapherd.input;

import com.fasterxml.jackson.core.JacksonException;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;

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
      var at = e.getLocation();
      String where = at == null ? "" : "line " + at.getLineNr() + ", column " + at.getColumnNr();
      throw new InputException(name, where, "malformed YAML: " + firstLine(e.getOriginalMessage()));
    }
    if (tree == null || tree.isMissingNode() || tree.isNull()) {
      throw new InputException(name, "", "is empty");
    }
    return Field.root(name, tree);
  }

  private static String firstLine(String message) {
    int newline = message.indexOf('\n');
    return newline < 0 ? message : message.substring(0, newline);
  }
}
