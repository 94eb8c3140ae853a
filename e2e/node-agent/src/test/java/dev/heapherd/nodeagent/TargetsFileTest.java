package dev.heapherd.nodeagent;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.FileTime;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class TargetsFileTest {

  @TempDir Path dir;

  @Test
  void writesOneGroupPerTargetInFileSdForm() throws IOException {
    Path file = dir.resolve("sd/targets.json");
    TargetsFile targets = new TargetsFile(Optional.of(file));

    targets.write(
        List.of(
            new Target("127.0.0.1:4002", Map.of("pod", "b")),
            new Target("127.0.0.1:4001", Map.of("pod", "a", "namespace", "shop"))));

    JsonNode groups = new ObjectMapper().readTree(file.toFile());
    assertThat(groups).hasSize(2);
    assertThat(groups.get(0).get("targets").get(0).asText()).isEqualTo("127.0.0.1:4001");
    assertThat(groups.get(0).get("labels").get("namespace").asText()).isEqualTo("shop");
    assertThat(groups.get(1).get("labels").get("pod").asText()).isEqualTo("b");
    assertThat(dir.resolve("sd/targets.json.tmp")).doesNotExist();
  }

  @Test
  void leavesTheFileAloneWhenNothingChanged() throws IOException {
    Path file = dir.resolve("targets.json");
    TargetsFile targets = new TargetsFile(Optional.of(file));
    targets.write(List.of(new Target("127.0.0.1:4001", Map.of())));
    FileTime old = FileTime.from(Instant.parse("2020-01-01T00:00:00Z"));
    Files.setLastModifiedTime(file, old);

    targets.write(List.of(new Target("127.0.0.1:4001", Map.of())));

    assertThat(Files.getLastModifiedTime(file)).isEqualTo(old);
  }
}
