package dev.heapherd.lab;

import java.math.BigDecimal;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.sql.Timestamp;
import java.util.SplittableRandom;

/**
 * {@code sql}: an H2 in-memory database of the parts catalogue's customers, products and orders.
 * Operations are order histories (join and aggregate), regional best sellers over recent orders,
 * new orders with their lines (the oldest order is retired so the tables keep their size) and
 * status updates, each in its own transaction.
 */
public final class SqlApp implements LabApp {

  /** Customers at size scale 1. */
  static final int BASE_CUSTOMERS = 40_000;

  /** Products at size scale 1. */
  static final int BASE_PRODUCTS = 10_000;

  /** Orders at size scale 1: with their lines about 150 MiB of rows and indexes in heap. */
  static final int BASE_ORDERS = 120_000;

  /** Most lines on one order; each order gets 1 to this many. */
  static final int MAX_LINES_PER_ORDER = 5;

  /** Recent orders a best-seller report covers at cost scale 1. */
  static final int BASE_REPORT_ORDERS = 400;

  /** Rows of an order history at cost scale 1: one page. */
  static final int BASE_HISTORY_ROWS = 20;

  /**
   * Orders per transaction while loading: one huge transaction would hold its undo log in heap and
   * need far more than the live set.
   */
  static final int LOAD_ORDERS_PER_COMMIT = 1_000;

  /** Smallest table sizes that still make meaningful joins. */
  static final int MIN_ROWS = 100;

  /** Milliseconds between consecutive orders' timestamps in the generated history: one minute. */
  static final long ORDER_SPACING_MILLIS = 60_000;

  /** Highest unit price in cents. */
  static final int MAX_PRICE_CENTS = 50_000;

  /** Largest quantity on one line. */
  static final int MAX_QUANTITY = 20;

  /** Decimal places of a price: whole cents. */
  static final int PRICE_SCALE = 2;

  private static final String[] STATUSES = {"placed", "picked", "shipped", "delivered", "returned"};

  private final SplittableRandom random;
  private final Catalogue catalogue;
  private final int customers;
  private final int products;
  private final int orders;
  private final int reportOrders;
  private final int historyRows;
  private final String url;
  private Connection connection;
  private PreparedStatement history;
  private PreparedStatement bestSellers;
  private PreparedStatement insertOrder;
  private PreparedStatement insertLine;
  private PreparedStatement deleteLines;
  private PreparedStatement deleteOrder;
  private PreparedStatement updateStatus;
  private long nextOrderId;
  private long oldestOrderId;

  /** A database service of the given size. */
  public SqlApp(AppSettings settings) {
    random = new SplittableRandom(settings.seed());
    catalogue = new Catalogue(random);
    customers = settings.scaledSize(BASE_CUSTOMERS, MIN_ROWS);
    products = settings.scaledSize(BASE_PRODUCTS, MIN_ROWS);
    orders = settings.scaledSize(BASE_ORDERS, MIN_ROWS);
    reportOrders = settings.scaledCost(BASE_REPORT_ORDERS, 1);
    historyRows = settings.scaledCost(BASE_HISTORY_ROWS, 1);
    // A private database per process; DB_CLOSE_DELAY keeps it while statements come and go.
    url = "jdbc:h2:mem:lab" + settings.seed() + ";DB_CLOSE_DELAY=-1";
  }

  @Override
  public void load() throws SQLException {
    connection = DriverManager.getConnection(url);
    try (Statement ddl = connection.createStatement()) {
      ddl.execute(
          "CREATE TABLE customers (id INT PRIMARY KEY, name VARCHAR(80), region VARCHAR(16),"
              + " tier INT)");
      ddl.execute(
          "CREATE TABLE products (id INT PRIMARY KEY, sku VARCHAR(16), title VARCHAR(120),"
              + " category VARCHAR(16), price DECIMAL(12,2))");
      ddl.execute(
          "CREATE TABLE orders (id BIGINT PRIMARY KEY, customer_id INT, placed_at TIMESTAMP,"
              + " status VARCHAR(12), total DECIMAL(14,2))");
      ddl.execute(
          "CREATE TABLE order_lines (order_id BIGINT, line INT, product_id INT, quantity INT,"
              + " price DECIMAL(12,2), PRIMARY KEY (order_id, line))");
      ddl.execute("CREATE INDEX orders_by_customer ON orders (customer_id, placed_at)");
    }
    connection.setAutoCommit(false);
    try (PreparedStatement insert =
        connection.prepareStatement("INSERT INTO customers VALUES (?, ?, ?, ?)")) {
      for (int id = 0; id < customers; id++) {
        insert.setInt(1, id);
        insert.setString(2, catalogue.text(random, 2) + " " + catalogue.word(random) + " Ltd");
        insert.setString(3, Catalogue.pick(Catalogue.REGIONS, random));
        insert.setInt(4, random.nextInt(4));
        insert.addBatch();
      }
      insert.executeBatch();
    }
    try (PreparedStatement insert =
        connection.prepareStatement("INSERT INTO products VALUES (?, ?, ?, ?, ?)")) {
      for (int id = 0; id < products; id++) {
        String category = Catalogue.pick(Catalogue.CATEGORIES, random);
        insert.setInt(1, id);
        insert.setString(2, Catalogue.sku(category, id));
        insert.setString(
            3,
            Catalogue.pick(Catalogue.MATERIALS, random)
                + " "
                + category
                + " "
                + catalogue.text(random, 4));
        insert.setString(4, category);
        insert.setBigDecimal(5, cents(1 + random.nextInt(MAX_PRICE_CENTS)));
        insert.addBatch();
      }
      insert.executeBatch();
    }
    connection.commit();
    prepare();
    for (int i = 0; i < orders; i++) {
      placeOrder();
      if (i % LOAD_ORDERS_PER_COMMIT == 0) {
        connection.commit();
      }
    }
    connection.commit();
  }

  @Override
  public void operate() throws SQLException {
    int kind = random.nextInt(100);
    if (kind < 35) {
      orderHistory();
    } else if (kind < 50) {
      regionalBestSellers();
    } else if (kind < 75) {
      placeOrder();
      retireOldestOrder();
    } else {
      updateStatus.setString(1, STATUSES[random.nextInt(STATUSES.length)]);
      updateStatus.setLong(2, oldestOrderId + random.nextLong(nextOrderId - oldestOrderId));
      updateStatus.executeUpdate();
    }
    connection.commit();
  }

  @Override
  public void close() throws SQLException {
    if (connection != null) {
      try (Statement shutdown = connection.createStatement()) {
        shutdown.execute("SHUTDOWN");
      }
    }
  }

  private void prepare() throws SQLException {
    history =
        connection.prepareStatement(
            "SELECT o.id, o.placed_at, o.status, o.total, COUNT(l.line), SUM(l.quantity)"
                + " FROM orders o JOIN order_lines l ON l.order_id = o.id"
                + " WHERE o.customer_id = ? GROUP BY o.id, o.placed_at, o.status, o.total"
                + " ORDER BY o.placed_at DESC LIMIT ?");
    bestSellers =
        connection.prepareStatement(
            "SELECT p.category, p.sku, SUM(l.quantity) AS units, SUM(l.quantity * l.price) AS"
                + " revenue FROM orders o JOIN customers c ON c.id = o.customer_id"
                + " JOIN order_lines l ON l.order_id = o.id JOIN products p ON p.id ="
                + " l.product_id WHERE o.id >= ? AND c.region = ? GROUP BY p.category, p.sku"
                + " ORDER BY revenue DESC LIMIT 10");
    insertOrder = connection.prepareStatement("INSERT INTO orders VALUES (?, ?, ?, ?, ?)");
    insertLine = connection.prepareStatement("INSERT INTO order_lines VALUES (?, ?, ?, ?, ?)");
    deleteLines = connection.prepareStatement("DELETE FROM order_lines WHERE order_id = ?");
    deleteOrder = connection.prepareStatement("DELETE FROM orders WHERE id = ?");
    updateStatus = connection.prepareStatement("UPDATE orders SET status = ? WHERE id = ?");
  }

  private void orderHistory() throws SQLException {
    history.setInt(1, random.nextInt(customers));
    history.setInt(2, historyRows);
    drain(history);
  }

  private void regionalBestSellers() throws SQLException {
    bestSellers.setLong(1, Math.max(oldestOrderId, nextOrderId - reportOrders));
    bestSellers.setString(2, Catalogue.pick(Catalogue.REGIONS, random));
    drain(bestSellers);
  }

  private void placeOrder() throws SQLException {
    long id = nextOrderId++;
    int lines = 1 + random.nextInt(MAX_LINES_PER_ORDER);
    long totalCents = 0;
    for (int line = 0; line < lines; line++) {
      int quantity = 1 + random.nextInt(MAX_QUANTITY);
      int priceCents = 1 + random.nextInt(MAX_PRICE_CENTS);
      totalCents += (long) quantity * priceCents;
      insertLine.setLong(1, id);
      insertLine.setInt(2, line);
      insertLine.setInt(3, random.nextInt(products));
      insertLine.setInt(4, quantity);
      insertLine.setBigDecimal(5, cents(priceCents));
      insertLine.addBatch();
    }
    insertLine.executeBatch();
    insertOrder.setLong(1, id);
    insertOrder.setInt(2, random.nextInt(customers));
    insertOrder.setTimestamp(3, new Timestamp(id * ORDER_SPACING_MILLIS));
    insertOrder.setString(4, STATUSES[0]);
    insertOrder.setBigDecimal(5, cents(totalCents));
    insertOrder.executeUpdate();
  }

  private void retireOldestOrder() throws SQLException {
    long id = oldestOrderId++;
    deleteLines.setLong(1, id);
    deleteLines.executeUpdate();
    deleteOrder.setLong(1, id);
    deleteOrder.executeUpdate();
  }

  private static void drain(PreparedStatement statement) throws SQLException {
    try (ResultSet rows = statement.executeQuery()) {
      while (rows.next()) {
        rows.getObject(1);
      }
    }
  }

  private static BigDecimal cents(long cents) {
    return BigDecimal.valueOf(cents, PRICE_SCALE);
  }
}
