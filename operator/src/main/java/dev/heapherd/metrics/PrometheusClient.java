package dev.heapherd.metrics;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.InputStream;
import java.net.ConnectException;
import java.net.URI;
import java.net.URLEncoder;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.net.http.HttpTimeoutException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.GeneralSecurityException;
import java.security.KeyStore;
import java.security.cert.Certificate;
import java.security.cert.CertificateFactory;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import javax.net.ssl.SSLContext;
import javax.net.ssl.TrustManagerFactory;

/** A small client of the Prometheus HTTP API (instant queries), with one-line errors. */
public final class PrometheusClient {

  private static final ObjectMapper JSON = new ObjectMapper();

  private static final double MILLIS_PER_SECOND = 1000;

  /** Longest part of an error body quoted in a message. */
  private static final int MAX_QUOTED_CHARS = 200;

  private final PrometheusEndpoint endpoint;
  private final HttpClient http;

  private PrometheusClient(PrometheusEndpoint endpoint, HttpClient http) {
    this.endpoint = endpoint;
    this.http = http;
  }

  /** A client for {@code endpoint}; fails when its CA certificate cannot be read. */
  public static PrometheusClient connect(PrometheusEndpoint endpoint) throws MetricsException {
    HttpClient.Builder builder =
        HttpClient.newBuilder()
            .connectTimeout(endpoint.timeout())
            .followRedirects(HttpClient.Redirect.NORMAL);
    if (endpoint.caCertificate().isPresent()) {
      builder.sslContext(trusting(endpoint.caCertificate().get()));
    }
    return new PrometheusClient(endpoint, builder.build());
  }

  /** The endpoint this client talks to. */
  public PrometheusEndpoint endpoint() {
    return endpoint;
  }

  /** Evaluates {@code promql} at {@code time}. */
  public QueryResult query(String promql, Instant time) throws MetricsException {
    String form =
        "query=" + URLEncoder.encode(promql, StandardCharsets.UTF_8) + "&time=" + seconds(time);
    Answer answer = post("api/v1/query", form);
    JsonNode data = answer.data();
    String type = data.path("resultType").asText();
    List<Sample> samples = new ArrayList<>();
    if ("scalar".equals(type)) {
      samples.add(new Sample(Map.of(), value(data.path("result"))));
    } else if ("vector".equals(type)) {
      for (JsonNode series : data.path("result")) {
        samples.add(new Sample(labels(series.path("metric")), value(series.path("value"))));
      }
    } else {
      throw new MetricsException(
          MetricsException.Kind.BAD_RESPONSE,
          "query returned a " + type + ", expected an instant vector: " + promql);
    }
    return new QueryResult(samples, answer.warnings());
  }

  /**
   * Evaluates {@code promql} at every {@code step} from {@code start} to {@code end}. Warnings
   * (partial data) fail the query, as the caller cannot tell which points are missing.
   */
  public List<Series> queryRange(String promql, Instant start, Instant end, Duration step)
      throws MetricsException {
    String form =
        "query="
            + URLEncoder.encode(promql, StandardCharsets.UTF_8)
            + "&start="
            + seconds(start)
            + "&end="
            + seconds(end)
            + "&step="
            + String.format(Locale.ROOT, "%.3f", step.toMillis() / MILLIS_PER_SECOND);
    Answer answer = post("api/v1/query_range", form);
    if (!answer.warnings().isEmpty()) {
      throw new MetricsException(
          MetricsException.Kind.PARTIAL_DATA,
          "Prometheus returned partial data: " + String.join("; ", answer.warnings()));
    }
    if (!"matrix".equals(answer.data().path("resultType").asText())) {
      throw new MetricsException(
          MetricsException.Kind.BAD_RESPONSE, "range query did not return a matrix: " + promql);
    }
    List<Series> series = new ArrayList<>();
    for (JsonNode s : answer.data().path("result")) {
      List<Series.Point> points = new ArrayList<>();
      for (JsonNode pair : s.path("values")) {
        points.add(new Series.Point(pair.path(0).asDouble(), value(pair)));
      }
      series.add(new Series(labels(s.path("metric")), points));
    }
    return series;
  }

  private static String seconds(Instant time) {
    return time.getEpochSecond() + "." + String.format("%03d", time.getNano() / 1_000_000);
  }

  /** The {@code data} part of a successful answer and its warnings. */
  private record Answer(JsonNode data, List<String> warnings) {}

  private Answer post(String path, String form) throws MetricsException {
    URI uri = resolve(path);
    HttpRequest.Builder request =
        HttpRequest.newBuilder(uri)
            .timeout(endpoint.timeout())
            .header("Content-Type", "application/x-www-form-urlencoded")
            .header("Accept", "application/json")
            .POST(HttpRequest.BodyPublishers.ofString(form));
    endpoint.bearerToken().ifPresent(token -> request.header("Authorization", "Bearer " + token));
    HttpResponse<String> response;
    try {
      response = http.send(request.build(), HttpResponse.BodyHandlers.ofString());
    } catch (HttpTimeoutException e) {
      throw new MetricsException(
          MetricsException.Kind.TIMEOUT,
          "Prometheus at " + endpoint.baseUri() + " did not answer within " + endpoint.timeout());
    } catch (ConnectException e) {
      throw new MetricsException(
          MetricsException.Kind.UNREACHABLE,
          "cannot connect to Prometheus at " + endpoint.baseUri() + ": connection refused");
    } catch (IOException e) {
      throw new MetricsException(
          MetricsException.Kind.UNREACHABLE,
          "cannot reach Prometheus at " + endpoint.baseUri() + ": " + e);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new MetricsException(MetricsException.Kind.TIMEOUT, "interrupted while querying");
    }
    return data(response);
  }

  private Answer data(HttpResponse<String> response) throws MetricsException {
    int status = response.statusCode();
    JsonNode body;
    try {
      body = JSON.readTree(response.body());
    } catch (JsonProcessingException e) {
      body = null;
    }
    String detail = describe(body == null ? "" : body.path("error").asText(""), response.body());
    if (status >= 500) {
      throw new MetricsException(
          MetricsException.Kind.SERVER_ERROR, "Prometheus failed (HTTP " + status + "): " + detail);
    }
    if (status >= 400) {
      throw new MetricsException(
          MetricsException.Kind.REJECTED,
          "Prometheus refused the query (HTTP " + status + "): " + detail);
    }
    if (body == null || !"success".equals(body.path("status").asText())) {
      throw new MetricsException(
          MetricsException.Kind.BAD_RESPONSE,
          "not a Prometheus API answer (HTTP " + status + "): " + detail);
    }
    List<String> warnings = new ArrayList<>();
    body.path("warnings").forEach(w -> warnings.add(w.asText()));
    return new Answer(body.path("data"), warnings);
  }

  private URI resolve(String path) {
    String base = endpoint.baseUri().toString();
    return URI.create(base.endsWith("/") ? base + path : base + "/" + path);
  }

  private static Map<String, String> labels(JsonNode metric) {
    Map<String, String> labels = new HashMap<>();
    metric.fields().forEachRemaining(e -> labels.put(e.getKey(), e.getValue().asText()));
    return labels;
  }

  /** A {@code [timestamp, "value"]} pair; Prometheus writes NaN and infinities as strings. */
  private static double value(JsonNode pair) throws MetricsException {
    String text = pair.path(1).asText("");
    switch (text) {
      case "NaN":
        return Double.NaN;
      case "+Inf":
        return Double.POSITIVE_INFINITY;
      case "-Inf":
        return Double.NEGATIVE_INFINITY;
      default:
        try {
          return Double.parseDouble(text);
        } catch (NumberFormatException e) {
          throw new MetricsException(
              MetricsException.Kind.BAD_RESPONSE, "not a sample value: \"" + text + "\"");
        }
    }
  }

  private static String describe(String apiError, String body) {
    String text = apiError.isEmpty() ? body : apiError;
    text = text.replaceAll("\\s+", " ").strip();
    return text.length() > MAX_QUOTED_CHARS ? text.substring(0, MAX_QUOTED_CHARS) + "..." : text;
  }

  private static SSLContext trusting(Path caFile) throws MetricsException {
    try (InputStream in = Files.newInputStream(caFile)) {
      KeyStore store = KeyStore.getInstance(KeyStore.getDefaultType());
      store.load(null, null);
      int index = 0;
      for (Certificate cert : CertificateFactory.getInstance("X.509").generateCertificates(in)) {
        store.setCertificateEntry("ca-" + index++, cert);
      }
      if (index == 0) {
        throw new MetricsException(
            MetricsException.Kind.UNREACHABLE, caFile + ": no certificate found");
      }
      TrustManagerFactory trust =
          TrustManagerFactory.getInstance(TrustManagerFactory.getDefaultAlgorithm());
      trust.init(store);
      SSLContext context = SSLContext.getInstance("TLS");
      context.init(null, trust.getTrustManagers(), null);
      return context;
    } catch (IOException | GeneralSecurityException e) {
      throw new MetricsException(
          MetricsException.Kind.UNREACHABLE,
          caFile + ": cannot read CA certificate: " + e.getMessage());
    }
  }
}
