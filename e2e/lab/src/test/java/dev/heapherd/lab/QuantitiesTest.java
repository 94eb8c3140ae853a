package dev.heapherd.lab;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.util.Map;
import org.junit.jupiter.api.Test;

class QuantitiesTest {

  @Test
  void readsBinaryDecimalAndPlainQuantities() {
    assertThat(Quantities.bytes("512Mi")).isEqualTo(512L << 20);
    assertThat(Quantities.bytes("1.5Gi")).isEqualTo(3L << 29);
    assertThat(Quantities.bytes("600M")).isEqualTo(600_000_000L);
    assertThat(Quantities.bytes("4096")).isEqualTo(4096);
  }

  @Test
  void refusesMilliAndGarbage() {
    assertThatThrownBy(() -> Quantities.bytes("512m")).hasMessageContaining("512m");
    assertThatThrownBy(() -> Quantities.bytes("lots")).hasMessageContaining("lots");
  }

  @Test
  void readsAPerAppList() {
    assertThat(Quantities.perApp("search=512Mi, sql=1Gi", "--heaps"))
        .isEqualTo(Map.of(AppKind.SEARCH, "512Mi", AppKind.SQL, "1Gi"));
    assertThat(Quantities.perApp(null, "--heaps")).isEmpty();
  }

  @Test
  void refusesUnknownAndRepeatedApps() {
    assertThatThrownBy(() -> Quantities.perApp("mail=1Gi", "--heaps"))
        .hasMessageContaining("unknown app \"mail\"");
    assertThatThrownBy(() -> Quantities.perApp("sql=1Gi,sql=2Gi", "--heaps"))
        .hasMessageContaining("sql is given twice");
  }
}
