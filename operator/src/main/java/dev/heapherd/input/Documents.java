package dev.heapherd.input;

import static dev.heapherd.engine.Units.MIB;

import com.fasterxml.jackson.core.JacksonException;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.json.JsonMapper;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import com.fasterxml.jackson.dataformat.yaml.YAMLParser;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.Optional;
import org.yaml.snakeyaml.LoaderOptions;
import org.yaml.snakeyaml.error.Mark;
import org.yaml.snakeyaml.error.MarkedYAMLException;

/** Reads a YAML or JSON file (JSON is valid YAML) into a tree, with one-line errors. */
public final class Documents {

  /**
   * Largest file read, our choice: a snapshot of 100,000 workloads is about 60 MB, so this leaves
   * room, and anything bigger (or without end, such as a device) is refused before it is read.
   */
  public static final long MAX_FILE_BYTES = 256 * MIB;

  private static final YAMLMapper MAPPER =
      YAMLMapper.builder(
              YAMLFactory.builder()
                  .loaderOptions(loaderOptions())
                  // On in a plain YAMLFactory, off in its builder: "---" alone must read as empty.
                  .enable(YAMLParser.Feature.EMPTY_STRING_AS_NULL)
                  .build())
          .enable(JsonParser.Feature.STRICT_DUPLICATE_DETECTION)
          .build();

  private static final ObjectMapper JSON =
      JsonMapper.builder().enable(JsonParser.Feature.STRICT_DUPLICATE_DETECTION).build();

  /**
   * Longest YAML line read, our choice: no field of a pool, snapshot or manifest needs more, and
   * the YAML scanner's time grows faster than a token's length (a 50 MB value took minutes).
   */
  static final int MAX_YAML_LINE_CHARS = 1 << 20;

  private static LoaderOptions loaderOptions() {
    LoaderOptions options = new LoaderOptions();
    // SnakeYAML's own default is 3 MB, below a large pool's snapshot.
    options.setCodePointLimit((int) MAX_FILE_BYTES);
    return options;
  }

  private Documents() {}

  static Field read(Path file) throws InputException {
    String name = file.toString();
    String text;
    try {
      if (Files.exists(file) && !Files.isRegularFile(file)) {
        throw new InputException(name, "", "cannot read: not a regular file");
      }
      if (Files.size(file) > MAX_FILE_BYTES) {
        throw new InputException(
            name, "", "is larger than " + MAX_FILE_BYTES / MIB + " MiB; not read");
      }
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
      if (file.endsWith(".json")) {
        // Jackson's JSON parser reads in linear time and caps string lengths itself.
        tree = JSON.readTree(text);
        return tree == null || tree.isMissingNode() || tree.isNull()
            ? Optional.empty()
            : Optional.of(tree);
      }
      checkLineLengths(file, text, startLine);
      checkPlain(file, text, startLine);
      tree = MAPPER.readTree(text);
    } catch (JacksonException e) {
      throw malformed(file, e, startLine);
    } catch (IOException e) {
      throw new InputException(file, "", "cannot read: " + e.getMessage());
    }
    if (tree == null || tree.isMissingNode() || tree.isNull()) {
      return Optional.empty();
    }
    return Optional.of(tree);
  }

  private static void checkLineLengths(String file, String text, int startLine)
      throws InputException {
    int line = 0;
    int lineStart = 0;
    for (int i = 0; i <= text.length(); i++) {
      if (i == text.length() || text.charAt(i) == '\n') {
        if (i - lineStart > MAX_YAML_LINE_CHARS) {
          throw new InputException(
              file,
              "line " + (line + startLine),
              "is longer than " + MAX_YAML_LINE_CHARS + " characters; no field needs that much");
        }
        line++;
        lineStart = i + 1;
      }
    }
  }

  /**
   * Refuses what a tree would silently get wrong: an anchor or alias (Jackson reads {@code *name}
   * as the text "name", and a rewritten document would lose the link), and a second document after
   * the first (only the first would be read).
   */
  private static void checkPlain(String file, String text, int startLine)
      throws IOException, InputException {
    try (JsonParser parser = MAPPER.createParser(text)) {
      YAMLParser yaml = (YAMLParser) parser;
      int depth = 0;
      boolean rootDone = false;
      for (JsonToken t = yaml.nextToken(); t != null; t = yaml.nextToken()) {
        String where = "line " + (yaml.currentTokenLocation().getLineNr() + startLine - 1);
        if (rootDone) {
          throw new InputException(
              file,
              where,
              "a second YAML document; this file must hold one (split it, or remove the ---)");
        }
        if (yaml.isCurrentAlias() || yaml.getObjectId() != null) {
          throw new InputException(
              file,
              where,
              "uses a YAML anchor or alias (&name, *name), which heapherd does not resolve or"
                  + " keep; write the value out in full");
        }
        if (t.isStructStart()) {
          depth++;
        } else if (t.isStructEnd()) {
          depth--;
        }
        rootDone = depth == 0;
      }
    }
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
