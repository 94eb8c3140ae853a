package dev.heapherd.input;

import static org.assertj.core.api.Assertions.assertThat;

import dev.heapherd.metrics.QueryProfile;
import dev.heapherd.metrics.QueryProfiles;
import dev.heapherd.metrics.Signal;
import java.util.Optional;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.params.provider.ValueSource;

/** Finding the series selectors of a pool's PromQL that would read other namespaces. */
class PromqlSelectorsTest {

  private static final String SELECTOR = PoolFileReader.SELECTOR_PLACEHOLDER;

  @Test
  void everyTemplateOfTheBundledProfilesIsScoped() {
    for (QueryProfile profile : QueryProfiles.all()) {
      for (Signal signal : Signal.values()) {
        for (String template : profile.templates().getOrDefault(signal, java.util.List.of())) {
          assertThat(PromqlSelectors.firstWithout(template, SELECTOR))
              .as("%s %s: %s", profile.name(), signal.key(), template)
              .isEmpty();
        }
      }
    }
  }

  @ParameterizedTest
  @ValueSource(
      strings = {
        // The example of docs/metrics.md.
        "sum by (namespace, pod) (max_over_time(container_memory_working_set_bytes{${selector}}"
            + "[${window}]))",
        "label_replace(jvm_x{${selector}}, \"app\", \"$1\", \"pod\", \"(.*)-[0-9]+\")",
        "sum(rate(jvm_gc_pause_seconds_sum{${selector}, action!=\"end of minor GC\"}[${window}]))"
            + " by (namespace, pod) > bool 0",
        "jvm_x{${selector}} offset 5m / on (namespace, pod) group_left (id) jvm_y{${selector}}",
        "{__name__=~\"jvm_a|jvm_b\", ${selector}}",
        "max_over_time(jvm_x{${selector}}[${window}:1s]) @ end()",
        "1e-3 * jvm_x{${selector}} # a comment naming jvm_y",
        "topk without (id) (1, jvm_x{${selector}, id=~'G1 .*'}) or vector(0)",
        "jvm_x{pod=\"}\", ${selector}}",
      })
  void acceptsQueriesWhoseEverySelectorIsScoped(String promql) {
    assertThat(PromqlSelectors.firstWithout(promql, SELECTOR)).isEmpty();
  }

  @ParameterizedTest
  @CsvSource(
      delimiter = '|',
      value = {
        "up | up",
        "max by (namespace, pod) (jvm_memory_used_bytes) | jvm_memory_used_bytes",
        "rate(jvm_x[5m]) | jvm_x",
        "jvm_x{${selector}} / on (pod) jvm_y | jvm_y",
        "jvm_x{${selector}} or jvm_y{namespace=\"other\"} | {namespace=\"other\"}",
        "sum(jvm_x{${selector}}) + ignoring (id) group_left sum(jvm_y) | jvm_y",
        "{__name__=\"jvm_x\"} | {__name__=\"jvm_x\"}",
      })
  void findsTheFirstSelectorWithoutTheNamespaceMatchers(String promql, String unscoped) {
    assertThat(PromqlSelectors.firstWithout(promql, SELECTOR)).isEqualTo(Optional.of(unscoped));
  }
}
