package dev.heapherd.reconcile;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import io.fabric8.mockwebserver.http.RecordedRequest;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/** API calls as RBAC sees them, and the check that a set of rules allows them. */
final class ApiCalls {

  /** One call: RBAC verb, API group ("" for core), resource with any subresource. */
  record Call(String verb, String group, String resource) {
    @Override
    public String toString() {
      return verb + " " + (group.isEmpty() ? "core" : group) + "/" + resource;
    }
  }

  /** One rule of a Role or ClusterRole. */
  record Rule(List<String> groups, List<String> resources, List<String> verbs) {
    boolean allows(Call c) {
      return groups.contains(c.group())
          && resources.contains(c.resource())
          && verbs.contains(c.verb());
    }
  }

  private ApiCalls() {}

  /**
   * The RBAC view of a request, following the Kubernetes authorization documentation: GET is get on
   * a named object, list on a collection, watch with {@code watch=true}; POST create, PUT update,
   * PATCH patch, DELETE delete.
   */
  static Call of(RecordedRequest r) {
    String full = r.getPath();
    String path = full.contains("?") ? full.substring(0, full.indexOf('?')) : full;
    boolean watch = full.contains("watch=true");
    List<String> parts = new ArrayList<>(List.of(path.substring(1).split("/")));
    String group;
    if (parts.get(0).equals("api")) {
      group = "";
      parts = parts.subList(2, parts.size());
    } else {
      group = parts.get(1);
      parts = parts.subList(3, parts.size());
    }
    if (parts.size() >= 3 && parts.get(0).equals("namespaces")) {
      parts = parts.subList(2, parts.size());
    }
    String resource = parts.get(0) + (parts.size() >= 3 ? "/" + parts.get(2) : "");
    boolean named = parts.size() >= 2;
    String verb =
        switch (r.getMethod()) {
          case "GET" -> watch ? "watch" : named ? "get" : "list";
          case "POST" -> "create";
          case "PUT" -> "update";
          case "PATCH" -> "patch";
          case "DELETE" -> named ? "delete" : "deletecollection";
          default -> r.getMethod().toLowerCase();
        };
    return new Call(verb, group, resource);
  }

  /** The rules of the chart's operator role. */
  static List<Rule> chartRules() throws IOException {
    JsonNode tree =
        new YAMLMapper().readTree(Path.of("../helm/heapherd/files/operator-rules.yaml").toFile());
    List<Rule> rules = new ArrayList<>();
    for (JsonNode n : tree) {
      rules.add(
          new Rule(
              strings(n.get("apiGroups")), strings(n.get("resources")), strings(n.get("verbs"))));
    }
    return rules;
  }

  private static List<String> strings(JsonNode array) {
    List<String> out = new ArrayList<>();
    array.forEach(e -> out.add(e.asText()));
    return out;
  }
}
