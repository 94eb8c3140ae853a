package dev.heapherd.render;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.heapherd.input.InputException;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Writing a folder's files all at once: temporaries first, renames last, nothing left behind. */
class FolderWriterTest {

  @TempDir Path dir;

  @Test
  void writesEveryFileAndLeavesNoTemporary() throws Exception {
    Files.writeString(dir.resolve("berth-planner.yaml"), "old\n");
    FolderWriter writer = new FolderWriter(dir);
    writer.add("berth-planner.yaml", bytes("new\n"));
    writer.add("staging/tide-tables.yaml", bytes("tables\n"));

    writer.commit();

    assertThat(dir.resolve("berth-planner.yaml")).hasContent("new");
    assertThat(dir.resolve("staging/tide-tables.yaml")).hasContent("tables");
    assertThat(temporaries()).isEmpty();
  }

  @Test
  void aFailedRenameSaysWhatWasWrittenAndLeavesNoTemporary() throws Exception {
    for (String name : List.of("a.yaml", "b.yaml", "c.yaml")) {
      Files.writeString(dir.resolve(name), "old\n");
    }
    // The second rename fails, as a full disk or a file system turned read-only can make it.
    FolderWriter writer =
        new FolderWriter(
            dir,
            (temporary, target) -> {
              if (target.endsWith("b.yaml")) {
                throw new IOException("No space left on device");
              }
              Files.move(temporary, target, java.nio.file.StandardCopyOption.REPLACE_EXISTING);
            });
    for (String name : List.of("a.yaml", "b.yaml", "c.yaml")) {
      writer.add(name, bytes("new\n"));
    }

    assertThatThrownBy(writer::commit)
        .isInstanceOf(InputException.class)
        .hasMessageContaining(dir.resolve("b.yaml").toString())
        .hasMessageContaining("No space left on device")
        .hasMessageContaining("written before it: [" + dir.resolve("a.yaml") + "]");
    assertThat(dir.resolve("a.yaml")).hasContent("new");
    assertThat(dir.resolve("b.yaml")).hasContent("old");
    assertThat(dir.resolve("c.yaml")).hasContent("old");
    assertThat(temporaries()).isEmpty();
  }

  @Test
  void refusesATargetOutsideTheFolderBeforeWritingAnything() throws Exception {
    FolderWriter writer = new FolderWriter(dir.resolve("rendered"));

    assertThatThrownBy(() -> writer.add("../outside.yaml", bytes("x\n")))
        .isInstanceOf(InputException.class)
        .hasMessageContaining("is outside the folder");
    assertThat(dir.resolve("outside.yaml")).doesNotExist();
  }

  private List<Path> temporaries() throws IOException {
    try (Stream<Path> files = Files.walk(dir)) {
      return files.filter(f -> f.getFileName().toString().startsWith(".heapherd-")).toList();
    }
  }

  private static byte[] bytes(String text) {
    return text.getBytes(StandardCharsets.UTF_8);
  }
}
