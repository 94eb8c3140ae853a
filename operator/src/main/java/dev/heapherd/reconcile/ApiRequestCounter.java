package dev.heapherd.reconcile;

import io.fabric8.kubernetes.client.http.BasicBuilder;
import io.fabric8.kubernetes.client.http.HttpRequest;
import io.fabric8.kubernetes.client.http.Interceptor;
import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;

/**
 * Counts the requests the operator sends to the Kubernetes API server, by HTTP method, so its load
 * on the API server can be read beside its reconciles (heapherd_api_requests_total).
 */
public final class ApiRequestCounter implements Interceptor {

  /** The name under which the interceptor is added to the client. */
  public static final String NAME = "heapherd-api-requests";

  private final MeterRegistry registry;

  /** Counts into {@code registry}. */
  public ApiRequestCounter(MeterRegistry registry) {
    this.registry = registry;
  }

  @Override
  public void before(BasicBuilder builder, HttpRequest request, RequestTags tags) {
    Counter.builder("heapherd.api.requests")
        .description("Requests sent to the Kubernetes API server, watches included")
        .tag("method", request.method())
        .register(registry)
        .increment();
  }
}
