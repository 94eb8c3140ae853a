package dev.heapherd.chart;

import com.marcnuri.helm.Helm;
import io.fabric8.kubernetes.api.model.HasMetadata;
import io.fabric8.kubernetes.client.utils.Serialization;
import java.io.ByteArrayInputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/** The chart in helm/heapherd, rendered through helm's own library. */
public final class Chart {

  /** The chart's folder, from the operator module. */
  public static final Path DIR = Path.of("../helm/heapherd");

  /** The release namespace the tests install into. */
  public static final String NAMESPACE = "heapherd-system";

  private Chart() {}

  /** The chart rendered as release "heapherd" in {@link #NAMESPACE} with these values. */
  public static List<HasMetadata> render(Map<String, String> values) {
    var template = new Helm(DIR).template().withName("heapherd").withNamespace(NAMESPACE);
    values.forEach(template::set);
    String text = template.call();
    List<HasMetadata> out = new ArrayList<>();
    for (String doc : text.split("(?m)^---\\s*$")) {
      if (doc.strip().isEmpty()) {
        continue;
      }
      Object parsed =
          Serialization.unmarshal(new ByteArrayInputStream(doc.getBytes(StandardCharsets.UTF_8)));
      if (parsed instanceof HasMetadata h) {
        out.add(h);
      }
    }
    return out;
  }
}
