package dev.heapherd.metrics;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayInputStream;
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
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.ScheduledFuture;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import javax.net.ssl.SSLContext;
import javax.net.ssl.TrustManagerFactory;

/**
 * A small client of the Prometheus HTTP API (instant queries), with one-line errors.
 *
 * <p>Over 250 lines because every exchange passes the same guards, kept in one class so none can be
 * bypassed: no redirects, a deadline over the whole body, a size cap, the token redacted.
 */
public final class PrometheusClient {

  private static final ObjectMapper JSON = new ObjectMapper();

  private static final double MILLIS_PER_SECOND = 1000;

  /** Longest part of an error body quoted in a message. */
  private static final int MAX_QUOTED_CHARS = 200;

  /** Written where a server's text held the bearer token. */
  private static final String REDACTED = "(token)";

  /**
   * Largest answer read at all, our choice: one series per pod at about 200 bytes each leaves room
   * for 100,000 pods, and a bigger body is a wrong query or a wrong server, not data.
   */
  static final int MAX_BODY_BYTES_CEILING = 64 << 20;

  /**
   * Heap per byte of body allowed: the body, its parsed tree (several times the text: a node per
   * label and value) and the process's own caches must fit in the heap together, so a small heap
   * (the operator's default 192 MiB) reads at most a thirty-second of it. Our choice.
   */
  static final int HEAP_BYTES_PER_BODY_BYTE = 32;

  /** Smallest cap, whatever the heap: a few thousand series always fit. Our choice. */
  static final int MIN_BODY_BYTES = 1 << 20;

  /** The cap of this process, from the heap it runs with. */
  static final int MAX_BODY_BYTES = bodyCapBytes(Runtime.getRuntime().maxMemory());

  private static final int MIB_SHIFT = 20;

  private static final int REDIRECT_STATUS = 300;

  private static final int CLIENT_ERROR_STATUS = 400;

  /** Cuts off bodies that outlast their deadline; a daemon, so it never keeps a JVM alive. */
  private static final ScheduledExecutorService DEADLINES =
      Executors.newSingleThreadScheduledExecutor(
          r -> {
            Thread t = new Thread(r, "heapherd-prometheus-deadlines");
            t.setDaemon(true);
            return t;
          });

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
            // Never: a redirect to another origin would carry the bearer token there.
            .followRedirects(HttpClient.Redirect.NEVER);
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
    Instant deadline = Instant.now().plus(endpoint.timeout());
    HttpResponse<InputStream> response;
    try {
      response = http.send(request.build(), HttpResponse.BodyHandlers.ofInputStream());
    } catch (HttpTimeoutException e) {
      throw timedOut();
    } catch (ConnectException e) {
      throw new MetricsException(
          MetricsException.Kind.UNREACHABLE,
          "cannot connect to Prometheus at " + endpoint.redactedUri() + ": connection refused");
    } catch (IOException e) {
      throw new MetricsException(
          MetricsException.Kind.UNREACHABLE,
          "cannot reach Prometheus at " + endpoint.redactedUri() + ": " + e);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new MetricsException(MetricsException.Kind.TIMEOUT, "interrupted while querying");
    }
    if (response.statusCode() >= REDIRECT_STATUS && response.statusCode() < CLIENT_ERROR_STATUS) {
      closeQuietly(response.body());
      throw new MetricsException(
          MetricsException.Kind.REJECTED,
          "Prometheus at "
              + endpoint.redactedUri()
              + " answered with a redirect (HTTP "
              + response.statusCode()
              + "), which is not followed; pass the URL it leads to as --prometheus");
    }
    return data(response.statusCode(), body(response.body(), deadline));
  }

  private MetricsException timedOut() {
    return new MetricsException(
        MetricsException.Kind.TIMEOUT,
        "Prometheus at " + endpoint.redactedUri() + " did not answer within " + endpoint.timeout());
  }

  /**
   * Reads at most {@link #MAX_BODY_BYTES} of the body before {@code deadline}: the request timeout
   * covers only the headers, so a server sending one byte a second, or a body without end, is cut
   * off here.
   */
  private byte[] body(InputStream in, Instant deadline) throws MetricsException {
    AtomicBoolean cutOff = new AtomicBoolean();
    long remainingMillis = Math.max(1, Duration.between(Instant.now(), deadline).toMillis());
    ScheduledFuture<?> guard =
        DEADLINES.schedule(
            () -> {
              cutOff.set(true);
              closeQuietly(in);
            },
            remainingMillis,
            TimeUnit.MILLISECONDS);
    try (in) {
      byte[] bytes = in.readNBytes(MAX_BODY_BYTES + 1);
      if (cutOff.get()) {
        throw timedOut();
      }
      if (bytes.length > MAX_BODY_BYTES) {
        throw new MetricsException(
            MetricsException.Kind.BAD_RESPONSE,
            "Prometheus sent more than "
                + (MAX_BODY_BYTES >> MIB_SHIFT)
                + " MiB for one query, the most a heap of "
                + (Runtime.getRuntime().maxMemory() >> MIB_SHIFT)
                + " MiB reads; narrow the selector or the query, or give the process more heap");
      }
      return bytes;
    } catch (IOException e) {
      if (cutOff.get()) {
        throw timedOut();
      }
      throw new MetricsException(
          MetricsException.Kind.UNREACHABLE,
          "cannot read the answer of Prometheus at " + endpoint.redactedUri() + ": " + e);
    } finally {
      guard.cancel(false);
    }
  }

  /** The largest body a process with {@code maxHeapBytes} of heap reads. */
  static int bodyCapBytes(long maxHeapBytes) {
    long share = maxHeapBytes / HEAP_BYTES_PER_BODY_BYTE;
    return (int) Math.max(MIN_BODY_BYTES, Math.min(MAX_BODY_BYTES_CEILING, share));
  }

  private static void closeQuietly(InputStream in) {
    try {
      in.close();
    } catch (IOException e) {
      // Closing only ends the exchange early; nothing is left to report.
    }
  }

  private Answer data(int status, byte[] bytes) throws MetricsException {
    JsonNode body;
    try {
      body = JSON.readTree(bytes);
    } catch (IOException e) {
      body = null;
    }
    String detail = describe(body == null ? "" : body.path("error").asText(""), bytes.length);
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
    body.path("warnings").forEach(w -> warnings.add(quotable(w.asText())));
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

  // Only Prometheus' own error text is quoted: any other body (a proxy's page) may echo request
  // headers, the bearer token among them, so it is described by its size alone.
  private String describe(String apiError, int bodyBytes) {
    if (apiError.isEmpty()) {
      return "a body that is not a Prometheus error (" + bodyBytes + " bytes)";
    }
    return quotable(apiError);
  }

  /**
   * Text of the server's shown in messages, status and logs: on one line, cut, and with the bearer
   * token taken out, as a server or a proxy in front of it may echo the request's headers.
   */
  private String quotable(String serverText) {
    String text = serverText;
    if (endpoint.bearerToken().isPresent()) {
      text = text.replace(endpoint.bearerToken().get(), REDACTED);
    }
    text = text.replaceAll("[\\s\\p{Cntrl}]+", " ").strip();
    return text.length() > MAX_QUOTED_CHARS ? text.substring(0, MAX_QUOTED_CHARS) + "..." : text;
  }

  private static SSLContext trusting(Path caFile) throws MetricsException {
    try (InputStream in =
        new ByteArrayInputStream(
            PrometheusEndpoint.readCapped(caFile, PrometheusEndpoint.MAX_CA_FILE_BYTES))) {
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
