package dev.heapherd.synthetic;

import static org.assertj.core.api.Assertions.assertThat;

import java.util.Map;
import org.junit.jupiter.api.Test;

class PrometheusTextTest {

  @Test
  void parsesNamesLabelsEscapesAndValues() {
    PrometheusText text =
        PrometheusText.parse(
            "# TYPE jvm_gc_pause_seconds summary\n"
                + "jvm_gc_pause_seconds_count{action=\"end of minor GC\",gc=\"G1 Young"
                + " Generation\"} 14\n"
                + "jvm_memory_used_bytes{area=\"nonheap\",id=\"CodeHeap 'non-nmethods'\"}"
                + " 1.257472E6\n"
                + "odd{v=\"a\\\"b\\\\c\"} 1 1700000000000\n"
                + "process_cpu_usage 0.0\n"
                + "h_bucket{le=\"+Inf\"} +Inf\n");

    assertThat(text.named("jvm_gc_pause_seconds_count").get(0).labels())
        .isEqualTo(Map.of("action", "end of minor GC", "gc", "G1 Young Generation"));
    assertThat(text.labelValues("jvm_memory_used_bytes", "id"))
        .containsExactly("CodeHeap 'non-nmethods'");
    assertThat(text.named("jvm_memory_used_bytes").get(0).value()).isEqualTo(1_257_472.0);
    assertThat(text.named("odd").get(0).labels()).containsEntry("v", "a\"b\\c");
    assertThat(text.named("process_cpu_usage").get(0).labels()).isEmpty();
    assertThat(text.named("h_bucket").get(0).value()).isInfinite();
  }
}
