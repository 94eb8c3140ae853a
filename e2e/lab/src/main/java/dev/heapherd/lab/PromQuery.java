package dev.heapherd.lab;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.net.URI;
import java.net.URLEncoder;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;

/** Instant queries against the Prometheus HTTP API, evaluated at a given time. */
final class PromQuery {

  /** Time one query may take; the lab's queries touch a few hundred samples. */
  static final Duration QUERY_TIMEOUT = Duration.ofSeconds(10);

  /** Milliseconds in a second, for the API's fractional Unix times. */
  static final double MILLIS_PER_SECOND = 1000.0;

  private final URI base;
  private final HttpClient http = HttpClient.newHttpClient();
  private final ObjectMapper json = new ObjectMapper();

  PromQuery(URI base) {
    this.base = base;
  }

  /** The single value of {@code promql} at {@code at}; NaN when it yields no series. */
  double value(String promql, Instant at) throws IOException, InterruptedException {
    String query =
        "/api/v1/query?query="
            + URLEncoder.encode(promql, StandardCharsets.UTF_8)
            + "&time="
            + at.toEpochMilli() / MILLIS_PER_SECOND;
    HttpResponse<String> response =
        http.send(
            HttpRequest.newBuilder(base.resolve(query)).timeout(QUERY_TIMEOUT).build(),
            HttpResponse.BodyHandlers.ofString());
    JsonNode body = json.readTree(response.body());
    if (!"success".equals(body.path("status").asText())) {
      throw new IOException("Prometheus refused " + promql + ": " + body.path("error").asText());
    }
    JsonNode result = body.path("data").path("result");
    return result.isEmpty() ? Double.NaN : result.get(0).path("value").get(1).asDouble();
  }
}
