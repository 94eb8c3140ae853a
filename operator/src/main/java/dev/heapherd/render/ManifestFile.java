package dev.heapherd.render;

import com.fasterxml.jackson.databind.JsonNode;
import dev.heapherd.input.Documents;
import dev.heapherd.input.InputException;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * A manifest file cut into its documents at the {@code ---} lines, so that each document can be
 * kept verbatim or replaced alone; joining the documents gives back the file's exact text.
 *
 * @param name the file as errors and reports name it
 * @param relative the file's path under the manifests folder, '/' separated
 * @param documents every document in file order
 */
public record ManifestFile(String name, String relative, List<Document> documents) {

  /**
   * A document start marker: three dashes at the start of a line, then a blank or the line's end
   * (YAML 1.2, "c-directives-end"). Inside a document such a line cannot occur, even in a block
   * scalar, so cutting here is exact.
   */
  private static final Pattern DOCUMENT_START = Pattern.compile("(?m)^---(?=[ \\t\\r\\n]|\\z)");

  /** The marker as written back before every document but the first. */
  private static final String MARKER = "---";

  /** A line that holds no content: blank, a comment, or a directive such as {@code %YAML 1.2}. */
  private static final Pattern NO_CONTENT = Pattern.compile("[ \\t]*([#%].*)?\\r?");

  /**
   * One document and the marker before it.
   *
   * @param marker {@code ---}, or empty for the text before the first marker
   * @param text the document as written: from after the marker to the next marker
   * @param startLine the file's line on which {@code text} begins, from 1
   * @param tree the parsed document; empty when it holds only comments
   */
  public record Document(String marker, String text, int startLine, Optional<JsonNode> tree) {

    /** The file's line of the document's first content, for messages. */
    public int contentLine() {
      String[] lines = text.split("\n", -1);
      for (int i = 0; i < lines.length; i++) {
        if (!NO_CONTENT.matcher(lines[i]).matches()) {
          return startLine + i;
        }
      }
      return startLine;
    }
  }

  /**
   * Cuts and parses {@code text}. JSON files are one document: JSON has no markers.
   *
   * @throws InputException when a document is malformed; the message names the file's line
   */
  public static ManifestFile parse(String name, String relative, String text)
      throws InputException {
    List<Document> documents = new ArrayList<>();
    if (name.endsWith(".json")) {
      documents.add(document(name, "", text, 1));
      return new ManifestFile(name, relative, documents);
    }
    Matcher marker = DOCUMENT_START.matcher(text);
    int from = 0;
    String before = "";
    int line = 1;
    while (marker.find()) {
      String part = text.substring(from, marker.start());
      documents.add(document(name, before, part, line));
      line += lines(part);
      from = marker.end();
      before = MARKER;
    }
    documents.add(document(name, before, text.substring(from), line));
    return new ManifestFile(name, relative, documents);
  }

  /** The file's text: every document after its marker. */
  public String text() {
    StringBuilder out = new StringBuilder();
    documents.forEach(d -> out.append(d.marker()).append(d.text()));
    return out.toString();
  }

  /** Whether the file is JSON, which must stay JSON when a document is rewritten. */
  public boolean json() {
    return name.endsWith(".json");
  }

  /** This file with document {@code index} replaced by {@code text}. */
  public ManifestFile with(int index, String text) {
    List<Document> out = new ArrayList<>(documents);
    Document d = documents.get(index);
    out.set(index, new Document(d.marker(), text, d.startLine(), d.tree()));
    return new ManifestFile(name, relative, out);
  }

  private static Document document(String name, String marker, String text, int startLine)
      throws InputException {
    // Directives alone would not parse without the document they belong to.
    boolean empty = text.lines().allMatch(l -> NO_CONTENT.matcher(l).matches());
    Optional<JsonNode> tree = empty ? Optional.empty() : Documents.parse(name, text, startLine);
    return new Document(marker, text, startLine, tree);
  }

  private static int lines(String text) {
    return (int) text.chars().filter(c -> c == '\n').count();
  }
}
