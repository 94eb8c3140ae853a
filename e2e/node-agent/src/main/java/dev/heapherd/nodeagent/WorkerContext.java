package dev.heapherd.nodeagent;

import java.net.http.HttpClient;
import java.nio.file.Path;
import java.time.Duration;
import java.util.Set;
import java.util.concurrent.Executor;

/** What every pod and container worker shares; {@code started} collects every process started. */
record WorkerContext(
    String nodeName,
    ImageTable images,
    Path java,
    Path podsDir,
    MemoryEnforcement memory,
    HttpClient http,
    Executor probes,
    Duration maxBackOff,
    Duration maxGrace,
    Runnable wake,
    Set<ProcessHandle> started,
    ServiceAccountCredentials credentials) {}
