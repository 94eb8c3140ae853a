package dev.heapherd.lab;

import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.jgrapht.Graph;
import org.jgrapht.GraphPath;
import org.jgrapht.alg.shortestpath.BidirectionalDijkstraShortestPath;
import org.jgrapht.graph.DefaultWeightedEdge;
import org.jgrapht.graph.SimpleWeightedGraph;

/**
 * {@code graph}: a JGraphT road network for the parts maker's delivery vans: a jittered grid of
 * junctions with missing streets and some faster arterial roads. Operations are routes between
 * nearby junctions (bidirectional Dijkstra), kept in a recent-routes list as a dispatch screen
 * would, plus traffic updates that change the travel time of a stretch of streets.
 */
public final class GraphApp implements LabApp {

  /** Junctions along one side of the grid at size scale 1: 400 x 400, 160k junctions. */
  static final int BASE_SIDE = 400;

  /** Percent of grid streets that exist; the rest are missing, as in a real street map. */
  static final int STREET_PERCENT = 88;

  /** Every this many rows and columns a street is an arterial road. */
  static final int ARTERIAL_SPACING = 16;

  /** Travel time per unit of distance on an arterial road relative to a street. */
  static final double ARTERIAL_TIME_FACTOR = 0.4;

  /** How far from the grid point a junction may lie, in grid units. */
  static final double JITTER = 0.3;

  /** Furthest a route's destination lies from its start at cost scale 1, in grid steps. */
  static final int BASE_TRIP_RADIUS = 30;

  /** Routes the recent-routes list keeps. */
  static final int RECENT_ROUTES = 2_000;

  /** Percent of operations that are traffic updates. */
  static final int TRAFFIC_PERCENT = 10;

  /** Streets a traffic update touches. */
  static final int TRAFFIC_STREETS = 40;

  /** Largest slowdown a traffic update applies, as a factor on the free-flow time. */
  static final double MAX_CONGESTION_FACTOR = 3.0;

  /** Smallest grid side that still routes. */
  static final int MIN_SIDE = 10;

  static final int PERCENT = 100;

  /** A junction of the road network. */
  public record Junction(int id, double x, double y) {}

  private final SplittableRandom random;
  private final int side;
  private final int tripRadius;
  private final Graph<Junction, DefaultWeightedEdge> roads =
      new SimpleWeightedGraph<>(DefaultWeightedEdge.class);
  private final List<Junction> junctions = new ArrayList<>();
  private final List<DefaultWeightedEdge> streets = new ArrayList<>();
  private final List<Double> freeFlowSeconds = new ArrayList<>();
  private final ArrayDeque<GraphPath<Junction, DefaultWeightedEdge>> recent = new ArrayDeque<>();

  /** A routing service of the given size. */
  public GraphApp(AppSettings settings) {
    random = new SplittableRandom(settings.seed());
    // The live set grows with the number of junctions, the square of the side.
    side = (int) Math.max(MIN_SIDE, Math.round(BASE_SIDE * Math.sqrt(settings.sizeScale())));
    tripRadius = Math.min(side - 1, settings.scaledCost(BASE_TRIP_RADIUS, 1));
  }

  @Override
  public void load() {
    for (int row = 0; row < side; row++) {
      for (int col = 0; col < side; col++) {
        Junction junction =
            new Junction(
                row * side + col,
                col + (random.nextDouble() * 2 - 1) * JITTER,
                row + (random.nextDouble() * 2 - 1) * JITTER);
        roads.addVertex(junction);
        junctions.add(junction);
      }
    }
    for (int row = 0; row < side; row++) {
      for (int col = 0; col < side; col++) {
        if (col + 1 < side) {
          connect(at(row, col), at(row, col + 1), row % ARTERIAL_SPACING == 0);
        }
        if (row + 1 < side) {
          connect(at(row, col), at(row + 1, col), col % ARTERIAL_SPACING == 0);
        }
      }
    }
  }

  @Override
  public void operate() {
    if (random.nextInt(PERCENT) < TRAFFIC_PERCENT) {
      int start = random.nextInt(streets.size());
      double congestion = 1 + random.nextDouble() * (MAX_CONGESTION_FACTOR - 1);
      for (int i = 0; i < TRAFFIC_STREETS; i++) {
        int index = (start + i) % streets.size();
        roads.setEdgeWeight(streets.get(index), freeFlowSeconds.get(index) * congestion);
      }
      return;
    }
    int row = random.nextInt(side);
    int col = random.nextInt(side);
    int toRow = clamp(row + random.nextInt(-tripRadius, tripRadius + 1));
    int toCol = clamp(col + random.nextInt(-tripRadius, tripRadius + 1));
    GraphPath<Junction, DefaultWeightedEdge> route =
        new BidirectionalDijkstraShortestPath<>(roads).getPath(at(row, col), at(toRow, toCol));
    if (route != null) {
      recent.addLast(route);
      if (recent.size() > RECENT_ROUTES) {
        recent.removeFirst();
      }
    }
  }

  private void connect(Junction from, Junction to, boolean arterial) {
    if (!arterial && random.nextInt(PERCENT) >= STREET_PERCENT) {
      return;
    }
    DefaultWeightedEdge street = roads.addEdge(from, to);
    double seconds =
        Math.hypot(from.x() - to.x(), from.y() - to.y()) * (arterial ? ARTERIAL_TIME_FACTOR : 1);
    roads.setEdgeWeight(street, seconds);
    streets.add(street);
    freeFlowSeconds.add(seconds);
  }

  private Junction at(int row, int col) {
    return junctions.get(row * side + col);
  }

  private int clamp(int index) {
    return Math.max(0, Math.min(side - 1, index));
  }
}
