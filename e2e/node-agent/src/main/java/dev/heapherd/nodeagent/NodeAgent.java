package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.client.Config;
import io.fabric8.kubernetes.client.KubernetesClient;
import io.fabric8.kubernetes.client.KubernetesClientBuilder;
import io.fabric8.kubernetes.client.KubernetesClientException;
import io.fabric8.kubernetes.client.informers.ResourceEventHandler;
import io.fabric8.kubernetes.client.informers.SharedIndexInformer;
import java.io.IOException;
import java.net.http.HttpClient;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * A node of its own on a real control plane: registers the Node, binds pending pods to it and runs
 * their containers as local processes. All pod work happens on one sync loop, woken by pod events
 * and process exits and run every {@link #TICK} for back-offs and probes.
 */
final class NodeAgent implements AutoCloseable {

  /** Sync period without events: restarts and probes are due to within half a second. */
  static final Duration TICK = Duration.ofMillis(500);

  /**
   * Connect timeout of readiness checks: a loopback connect succeeds or is refused at once, so a
   * second only guards against a stalled machine.
   */
  private static final Duration PROBE_CONNECT = Duration.ofSeconds(1);

  /** How long close() waits for the sync loop to finish its pass. */
  private static final Duration LOOP_STOP = Duration.ofSeconds(30);

  private static final Logger LOG = LoggerFactory.getLogger(NodeAgent.class);

  private final AgentSettings settings;
  private final KubernetesClient client;
  private final MemoryEnforcement memory;
  private final NodeRegistration registration;
  private final PodBinder binder;
  private final WorkerContext context;
  private final PortAllocator ports = new PortAllocator();
  private final TargetsFile targets;
  private final Map<String, PodWorker> workers = new LinkedHashMap<>();
  private final Set<ProcessHandle> started = ConcurrentHashMap.newKeySet();
  private final ScheduledExecutorService loop =
      Executors.newSingleThreadScheduledExecutor(Threads.daemon("sync"));
  private final ExecutorService probes = Executors.newCachedThreadPool(Threads.daemon("probe"));
  private final ExecutorService stopper = Executors.newCachedThreadPool(Threads.daemon("stop"));
  private final AtomicBoolean wakeQueued = new AtomicBoolean();
  private SharedIndexInformer<Pod> informer;

  private NodeAgent(
      AgentSettings settings,
      ImageTable images,
      KubernetesClient client,
      MemoryEnforcement memory) {
    this.settings = settings;
    this.client = client;
    this.memory = memory;
    this.targets = new TargetsFile(settings.fileSd());
    this.registration =
        NodeRegistration.register(
            client,
            new NodeRegistration.Description(
                settings.nodeName(),
                settings.cpu(),
                settings.memory(),
                settings.maxPods(),
                memory));
    this.binder = new PodBinder(client, settings.nodeName(), registration.labels());
    this.context =
        new WorkerContext(
            settings.nodeName(),
            images,
            settings.java(),
            settings.stateDir().resolve("pods"),
            memory,
            // HTTP/1.1 as the kubelet's probes speak it, without an h2c upgrade attempt.
            HttpClient.newBuilder()
                .version(HttpClient.Version.HTTP_1_1)
                .connectTimeout(PROBE_CONNECT)
                .build(),
            probes,
            settings.maxBackOff(),
            settings.maxGrace(),
            this::wake,
            started,
            new ServiceAccountCredentials(client));
  }

  /**
   * Connects, registers the node and starts watching pods. Throws IllegalArgumentException for bad
   * settings and KubernetesClientException when the API server cannot be used.
   */
  static NodeAgent start(AgentSettings settings) throws IOException {
    ImageTable images = ImageTable.of(settings.images(), settings.stateDir().resolve("images"));
    Files.createDirectories(settings.stateDir().resolve("pods"));
    Config config;
    try {
      config = Config.fromKubeconfig(Files.readString(settings.kubeconfig()));
    } catch (RuntimeException e) {
      throw new IllegalArgumentException(
          "--kubeconfig: "
              + settings.kubeconfig()
              + " is not a kubeconfig: "
              + Main.firstLine(String.valueOf(e.getMessage())));
    }
    MemoryEnforcement memory =
        MemoryEnforcement.choose(settings.memoryEnforcement(), settings.nodeName());
    KubernetesClient client = new KubernetesClientBuilder().withConfig(config).build();
    NodeAgent agent;
    try {
      agent = new NodeAgent(settings, images, client, memory);
    } catch (KubernetesClientException e) {
      memory.close();
      client.close();
      throw new IllegalStateException(
          "cannot register node "
              + settings.nodeName()
              + " at "
              + config.getMasterUrl()
              + ": "
              + Main.rootMessage(e));
    } catch (RuntimeException e) {
      memory.close();
      client.close();
      throw e;
    }
    try {
      agent.targets.write(List.of());
      // Assigned before it runs: its first events already wake the loop, which reads its store.
      agent.informer = client.pods().inAnyNamespace().runnableInformer(0);
      agent.informer.addEventHandler(
          new ResourceEventHandler<>() {
            @Override
            public void onAdd(Pod pod) {
              agent.wake();
            }

            @Override
            public void onUpdate(Pod before, Pod after) {
              agent.wake();
            }

            @Override
            public void onDelete(Pod pod, boolean finalStateUnknown) {
              agent.wake();
            }
          });
      agent.informer.run();
      agent.loop.scheduleWithFixedDelay(
          agent::syncSafely, 0, TICK.toMillis(), TimeUnit.MILLISECONDS);
    } catch (RuntimeException | IOException e) {
      agent.close();
      throw e;
    }
    LOG.info(
        "node agent {} running; pods under {}, targets in {}",
        settings.nodeName(),
        settings.stateDir().resolve("pods"),
        settings.fileSd().map(Path::toString).orElse("(none)"));
    return agent;
  }

  /** The memory enforcement in use: {@code cgroup-v2} or {@code rss-polling}. */
  String memoryEnforcement() {
    return memory.name();
  }

  /** Every process this agent started, running or not, for checks that none is left. */
  Set<ProcessHandle> startedProcesses() {
    return Set.copyOf(started);
  }

  /** Stops watching, stops every process it started (SIGTERM, then SIGKILL), and disconnects. */
  @Override
  public void close() {
    if (informer != null) {
      informer.stop();
    }
    loop.shutdown();
    try {
      if (!loop.awaitTermination(LOOP_STOP.toSeconds(), TimeUnit.SECONDS)) {
        LOG.warn(
            "sync loop still busy after {} s; stopping processes anyway", LOOP_STOP.toSeconds());
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
    }
    List<CompletableFuture<Void>> stops = new ArrayList<>();
    for (PodWorker worker : workers.values()) {
      stops.add(worker.stopAll(settings.maxGrace(), stopper));
    }
    try {
      CompletableFuture.allOf(stops.toArray(CompletableFuture[]::new)).join();
    } catch (RuntimeException e) {
      LOG.warn("stopping processes failed: {}", Main.rootMessage(e));
    }
    for (ProcessHandle process : started) {
      // Only reached when a graceful stop failed: nothing the agent started may outlive it.
      if (process.isAlive()) {
        LOG.warn("pid {} still running at shutdown; killing it", process.pid());
        process.destroyForcibly();
      }
    }
    try {
      targets.write(List.of());
    } catch (IOException e) {
      LOG.warn("cannot empty the targets file: {}", e.getMessage());
    }
    probes.shutdownNow();
    stopper.shutdownNow();
    registration.close();
    memory.close();
    client.close();
    LOG.info("node agent {} stopped", settings.nodeName());
  }

  private void wake() {
    if (wakeQueued.compareAndSet(false, true)) {
      try {
        loop.execute(
            () -> {
              wakeQueued.set(false);
              syncSafely();
            });
      } catch (RejectedExecutionException e) {
        // Closing: the loop takes no more work.
        wakeQueued.set(false);
      }
    }
  }

  private void syncSafely() {
    try {
      sync();
    } catch (RuntimeException | IOException e) {
      // One failed pass must not end the loop (a scheduled task that throws is never run again).
      LOG.warn("sync failed: {}", e.toString());
    }
  }

  private void sync() throws IOException {
    Instant now = Instant.now();
    Map<String, Pod> ours = new HashMap<>();
    Set<String> seen = new HashSet<>();
    for (Pod pod : informer.getStore().list()) {
      String uid = pod.getMetadata().getUid();
      seen.add(uid);
      binder.offer(pod);
      if (settings.nodeName().equals(pod.getSpec().getNodeName())) {
        ours.put(uid, pod);
      }
    }
    binder.retain(seen);
    for (Pod pod : ours.values()) {
      String uid = pod.getMetadata().getUid();
      if (workers.containsKey(uid)) {
        continue;
      }
      if (pod.getMetadata().getDeletionTimestamp() != null) {
        // Deleted before this agent ran anything for it: nothing to stop, confirm at once.
        PodWorker.deleteNow(client, pod.getMetadata());
      } else if (!isTerminal(pod)) {
        try {
          workers.put(uid, new PodWorker(client, context, ports, pod));
        } catch (RuntimeException e) {
          // This pod waits for the next pass; the others go on.
          LOG.warn(
              "cannot set up {}/{}: {}",
              pod.getMetadata().getNamespace(),
              pod.getMetadata().getName(),
              e.getMessage());
        }
      }
    }
    for (Iterator<PodWorker> it = workers.values().iterator(); it.hasNext(); ) {
      PodWorker worker = it.next();
      try {
        if (worker.sync(Optional.ofNullable(ours.get(worker.uid())), now, stopper)) {
          worker.release();
          it.remove();
        }
      } catch (RuntimeException e) {
        LOG.warn("sync of pod {} failed: {}", worker.uid(), e.toString());
      }
    }
    List<Target> list = new ArrayList<>();
    workers.values().forEach(w -> list.addAll(w.targets()));
    targets.write(list);
  }

  private static boolean isTerminal(Pod pod) {
    String phase = pod.getStatus() == null ? null : pod.getStatus().getPhase();
    return PodStatusReport.SUCCEEDED.equals(phase) || PodStatusReport.FAILED.equals(phase);
  }
}
