package dev.heapherd.cli;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import dev.heapherd.engine.PoolPlan;
import dev.heapherd.input.ErrorText;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.Snapshot;
import dev.heapherd.plan.PlanDocument;
import dev.heapherd.plan.PlanPage;
import dev.heapherd.plan.PlanTable;
import dev.heapherd.proposal.ProposalBuilder;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** {@code plan}: computes a pool's heaps and limits from a snapshot, offline. */
@Command(
    name = "plan",
    mixinStandardHelpOptions = true,
    description = "Propose heaps and container limits for a pool from a snapshot or Prometheus.")
final class PlanCommand implements Callable<Integer> {

  /** Output formats of the plan. */
  enum Format {
    table,
    json,
    html
  }

  @Mixin PoolInputs inputs;

  @Option(
      names = {"-o", "--output"},
      defaultValue = "table",
      description = "Output format: ${COMPLETION-CANDIDATES} (default: ${DEFAULT-VALUE}).")
  Format format;

  @CommandLine.Spec CommandLine.Model.CommandSpec spec;

  @Override
  public Integer call() throws JsonProcessingException {
    PlanDocument doc;
    try {
      inputs.requireOneSource("plan");
      PoolFile poolFile = inputs.readPool();
      Snapshot measured = inputs.measurements(poolFile);
      PoolPlan plan =
          ProposalBuilder.fromMeasurements(
                  poolFile, inputs.pool.toString(), measured, inputs.source())
              .plan();
      doc = PlanDocument.of(poolFile, measured, plan);
    } catch (InputException e) {
      spec.commandLine().getErr().println("heapherd: " + ErrorText.oneLine(e.getMessage()));
      return Main.EXIT_BAD_INPUT;
    }
    String text =
        switch (format) {
          case json ->
              new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT).writeValueAsString(doc)
                  + System.lineSeparator();
          case html -> PlanPage.render(doc);
          case table -> PlanTable.render(doc);
        };
    spec.commandLine().getOut().print(text);
    spec.commandLine().getOut().flush();
    return 0;
  }
}
