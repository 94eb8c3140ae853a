package dev.heapherd.cli;

import dev.heapherd.input.ErrorText;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.plan.PlanPage;
import dev.heapherd.render.FolderWriter;
import dev.heapherd.render.ManifestFile;
import dev.heapherd.render.ManifestFolder;
import dev.heapherd.render.RenderReport;
import dev.heapherd.render.Renderer;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** {@code render}: writes a pool's proposed heaps and limits into a folder of manifests. */
@Command(
    name = "render",
    mixinStandardHelpOptions = true,
    description =
        "Write a pool's proposed heaps and memory limits into Kubernetes manifests, for GitOps."
            + " Exit 0: nothing changed; 3: changes written (with --check: would be).")
final class RenderCommand implements Callable<Integer> {

  @Mixin PoolInputs inputs;

  @Option(
      names = "--manifests",
      required = true,
      description = "Folder of manifests (*.yaml, *.yml, *.json), read recursively.")
  Path manifests;

  @Option(
      names = {"-o", "--output"},
      description = "Folder to write a copy of the manifests to (default: change them in place).")
  Path output;

  @Option(
      names = "--check",
      description = "Write no manifest; only report and set the exit code (--report is written).")
  boolean check;

  @Option(
      names = "--report",
      description = "Also write the plan's review page (HTML, self-contained) to this file.")
  Path report;

  @CommandLine.Spec CommandLine.Model.CommandSpec spec;

  @Override
  public Integer call() {
    Renderer.Outcome outcome;
    PoolFile poolFile;
    String namespace;
    try {
      inputs.requireOneSource("render");
      if (output != null) {
        checkApart(manifests, output);
      }
      poolFile = inputs.readPool();
      List<String> files = ManifestFolder.files(manifests);
      List<ManifestFile> read = ManifestFolder.read(manifests, files);
      namespace =
          inputs.metrics.namespace != null ? inputs.metrics.namespace : poolFile.namespace();
      Snapshot measured = inputs.measurements(poolFile);
      outcome =
          Renderer.render(
              poolFile,
              inputs.pool.toString(),
              measured,
              inputs.source(),
              namespace,
              manifests.toString(),
              read);
      if (report != null) {
        writeReport(outcome);
      }
      if (!check) {
        write(files, outcome);
      }
    } catch (InputException e) {
      spec.commandLine().getErr().println("heapherd: " + ErrorText.oneLine(e.getMessage()));
      return Main.EXIT_BAD_INPUT;
    }
    Path target = output != null ? output : manifests;
    spec.commandLine()
        .getOut()
        .print(RenderReport.text(outcome, poolFile.name(), namespace, target, check));
    spec.commandLine().getOut().flush();
    return outcome.changes().isEmpty() ? 0 : Main.EXIT_CHANGES;
  }

  /** The review page, written as manifests are: beside itself first, never through a link. */
  private void writeReport(Renderer.Outcome outcome) throws InputException {
    Path file = report.toAbsolutePath().normalize();
    if (file.getParent() == null || file.getFileName() == null) {
      throw new InputException("--report", "", report + " is not a file path");
    }
    FolderWriter writer = new FolderWriter(file.getParent());
    writer.add(
        file.getFileName().toString(),
        PlanPage.render(outcome.review()).getBytes(StandardCharsets.UTF_8));
    writer.commit();
  }

  /** A folder inside the other would read its own output on the next run, or copy into itself. */
  private static void checkApart(Path manifests, Path output) throws InputException {
    Path in = manifests.toAbsolutePath().normalize();
    Path out = output.toAbsolutePath().normalize();
    if (in.startsWith(out) || out.startsWith(in)) {
      throw new InputException(
          "--output",
          "",
          output
              + " overlaps --manifests "
              + manifests
              + "; give a folder outside it, or leave --output out to change files in place");
    }
  }

  /**
   * In place: the changed files. With --output: every file, so the copy is complete; files already
   * equal are left alone, so a second run into the same folder touches nothing. All or nothing:
   * every target is checked and written beside itself before any is replaced.
   */
  private void write(List<String> files, Renderer.Outcome outcome) throws InputException {
    FolderWriter writer = new FolderWriter(output != null ? output : manifests);
    for (ManifestFile f : outcome.files()) {
      if (outcome.changedFiles().contains(f.relative())) {
        writer.add(f.relative(), f.text().getBytes(StandardCharsets.UTF_8));
      }
    }
    if (output != null) {
      for (String relative : files) {
        if (!outcome.changedFiles().contains(relative)) {
          try {
            writer.add(relative, Files.readAllBytes(manifests.resolve(relative)));
          } catch (IOException e) {
            throw new InputException(
                manifests.resolve(relative).toString(), "", "cannot read: " + e.getMessage());
          }
        }
      }
    }
    writer.commit();
  }
}
