package dev.heapherd.cli;

import dev.heapherd.input.ErrorText;
import dev.heapherd.input.InputException;
import dev.heapherd.metrics.MetricsException;
import dev.heapherd.metrics.PrometheusClient;
import dev.heapherd.reconcile.ApiRequestCounter;
import dev.heapherd.reconcile.OperatorRuntime;
import dev.heapherd.reconcile.PrometheusMetricsSource;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientBuilder;
import io.fabric8.kubernetes.client.KubernetesClientException;
import io.micrometer.core.instrument.binder.jvm.JvmGcMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmMemoryMetrics;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.IOException;
import java.net.InetSocketAddress;
import java.util.HashSet;
import java.util.List;
import java.util.Optional;
import java.util.concurrent.Callable;
import java.util.concurrent.CountDownLatch;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** {@code operator}: reconciles HeapPools in the cluster of the current kubeconfig. */
@Command(
    name = "operator",
    mixinStandardHelpOptions = true,
    description =
        "Run the operator against the cluster of the current kubeconfig (or in-cluster"
            + " credentials): publish proposals for HeapPools and, in Apply mode, roll them out.")
final class OperatorCommand implements Callable<Integer> {

  @Mixin PrometheusOptions server;

  @Option(
      names = "--namespaces",
      split = ",",
      description = "Namespaces to watch, comma-separated (default: all).")
  List<String> namespaces = List.of();

  @Option(
      names = "--leader-election-namespace",
      description = "Namespace of the leader-election Lease; set it when running two replicas.")
  String leaseNamespace;

  @Option(
      names = "--http-address",
      defaultValue = "0.0.0.0:8080",
      description = "Where /metrics, /healthz and /readyz are served (default: ${DEFAULT-VALUE}).")
  String httpAddress;

  @Option(
      names = "--measure-every-seconds",
      defaultValue = "60",
      description = "Shortest time between two measurements of a pool (default: ${DEFAULT-VALUE}).")
  long measureEverySeconds;

  @CommandLine.Spec CommandLine.Model.CommandSpec spec;

  @Override
  public Integer call() throws InterruptedException {
    var err = spec.commandLine().getErr();
    InetSocketAddress address;
    PrometheusClient prometheusClient;
    try {
      address = address(httpAddress);
      if (server.prometheus == null) {
        throw new InputException(
            "--prometheus", "", "give the Prometheus the workloads' metrics are read from");
      }
      prometheusClient = PrometheusClient.connect(server.endpoint());
    } catch (IllegalArgumentException | MetricsException | InputException e) {
      err.println("heapherd: " + ErrorText.oneLine(e.getMessage()));
      return Main.EXIT_BAD_INPUT;
    }
    PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    new JvmMemoryMetrics().bindTo(registry);
    new JvmGcMetrics().bindTo(registry);
    KubernetesClient client =
        new KubernetesClientBuilder()
            .withHttpClientBuilderConsumer(
                b ->
                    b.addOrReplaceInterceptor(
                        ApiRequestCounter.NAME, new ApiRequestCounter(registry)))
            .build();
    OperatorRuntime runtime;
    try {
      runtime =
          OperatorRuntime.start(
              client,
              new PrometheusMetricsSource(prometheusClient, measureEverySeconds),
              registry,
              new OperatorRuntime.Settings(
                  new HashSet<>(namespaces), Optional.ofNullable(leaseNamespace), true));
    } catch (KubernetesClientException | io.javaoperatorsdk.operator.OperatorException e) {
      err.println("heapherd: cannot start against " + client.getMasterUrl() + ": " + rootCause(e));
      client.close();
      return Main.EXIT_INTERNAL_ERROR;
    }
    CountDownLatch stopped = new CountDownLatch(1);
    try (HealthServer health =
        HealthServer.start(address, registry, runtime::healthy, runtime::reviewPage)) {
      Runtime.getRuntime()
          .addShutdownHook(
              new Thread(
                  () -> {
                    runtime.close();
                    stopped.countDown();
                  }));
      err.println(
          "heapherd: operator running against "
              + client.getMasterUrl()
              + "; metrics and health on port "
              + health.port());
      stopped.await();
    } catch (IOException e) {
      err.println("heapherd: cannot serve on " + httpAddress + ": " + e.getMessage());
      runtime.close();
      return Main.EXIT_BAD_INPUT;
    }
    return 0;
  }

  private static InetSocketAddress address(String text) {
    int colon = text.lastIndexOf(':');
    if (colon < 0) {
      throw new IllegalArgumentException("--http-address must be HOST:PORT, got " + text);
    }
    try {
      return new InetSocketAddress(
          text.substring(0, colon), Integer.parseInt(text.substring(colon + 1)));
    } catch (IllegalArgumentException e) {
      throw new IllegalArgumentException("--http-address must be HOST:PORT, got " + text);
    }
  }

  private static String rootCause(Throwable e) {
    Throwable t = e;
    while (t.getCause() != null) {
      t = t.getCause();
    }
    return t.getMessage();
  }
}
