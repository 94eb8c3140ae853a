package dev.heapherd.api;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** The checked-in CRD is the one the build generates from the Java types. */
class CrdUpToDateTest {

  private static final String FILE = "heappools.heapherd.dev-v1.yml";

  @ParameterizedTest
  @ValueSource(strings = {"../crds", "../helm/heapherd/crds"})
  void checkedInCrdMatchesTheGeneratedOne(String folder) throws IOException {
    Path generated = Path.of("target/classes/META-INF/fabric8", FILE);
    Path checkedIn = Path.of(folder, FILE);
    assertThat(generated).as("the build generates the CRD before tests run").exists();
    assertThat(Files.readString(checkedIn))
        .as("%s/%s is stale: run ./dev.sh crds and commit the result", folder, FILE)
        .isEqualTo(Files.readString(generated));
  }
}
