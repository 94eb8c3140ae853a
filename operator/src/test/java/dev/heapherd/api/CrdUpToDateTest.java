package dev.heapherd.api;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;

/** The checked-in CRD is the one the build generates from the Java types. */
class CrdUpToDateTest {

  private static final String FILE = "heappools.heapherd.dev-v1.yml";

  @Test
  void checkedInCrdMatchesTheGeneratedOne() throws IOException {
    Path generated = Path.of("target/classes/META-INF/fabric8", FILE);
    Path checkedIn = Path.of("../crds", FILE);
    assertThat(generated).as("the build generates the CRD before tests run").exists();
    assertThat(Files.readString(checkedIn))
        .as("crds/%s is stale: run ./dev.sh crds and commit the result", FILE)
        .isEqualTo(Files.readString(generated));
  }
}
