package dev.heapherd.lab;

import java.io.IOException;
import java.util.SplittableRandom;
import org.apache.lucene.analysis.standard.StandardAnalyzer;
import org.apache.lucene.document.Document;
import org.apache.lucene.document.Field;
import org.apache.lucene.document.IntPoint;
import org.apache.lucene.document.NumericDocValuesField;
import org.apache.lucene.document.SortedDocValuesField;
import org.apache.lucene.document.StoredField;
import org.apache.lucene.document.StringField;
import org.apache.lucene.document.TextField;
import org.apache.lucene.index.IndexWriter;
import org.apache.lucene.index.IndexWriterConfig;
import org.apache.lucene.index.StoredFields;
import org.apache.lucene.index.Term;
import org.apache.lucene.search.BooleanClause;
import org.apache.lucene.search.BooleanQuery;
import org.apache.lucene.search.IndexSearcher;
import org.apache.lucene.search.PhraseQuery;
import org.apache.lucene.search.Query;
import org.apache.lucene.search.ScoreDoc;
import org.apache.lucene.search.SearcherManager;
import org.apache.lucene.search.Sort;
import org.apache.lucene.search.SortField;
import org.apache.lucene.search.TermQuery;
import org.apache.lucene.search.TopDocs;
import org.apache.lucene.store.ByteBuffersDirectory;
import org.apache.lucene.util.BytesRef;

/**
 * {@code search}: a Lucene index of the parts catalogue held in heap (ByteBuffersDirectory).
 * Operations are mostly queries (keywords, keywords within a category, price ranges sorted by
 * price, phrases) that read the stored fields of their hits, plus stock and price updates that
 * rewrite documents; a near-real-time reopen makes updates visible, as a live catalogue does.
 */
public final class SearchApp implements LabApp {

  /** Documents at size scale 1: an index of about 150 MiB in heap with the writer's buffers. */
  static final int BASE_DOCUMENTS = 160_000;

  /** Words of a description at cost scale 1, around a paragraph of a product page. */
  static final int DESCRIPTION_WORDS = 50;

  /** Hits a query returns at cost scale 1: a results page. */
  static final int BASE_HITS = 20;

  /** Percent of operations that update a document; the rest query. */
  static final int UPDATE_PERCENT = 25;

  /** Nanoseconds between near-real-time reopens: updates show within a second. */
  static final long REOPEN_INTERVAL_NANOS = 1_000_000_000L;

  /** The writer's in-memory buffer before it flushes a segment; Lucene's default. */
  static final double RAM_BUFFER_MIB = IndexWriterConfig.DEFAULT_RAM_BUFFER_SIZE_MB;

  /** Highest list price in cents. */
  static final int MAX_PRICE_CENTS = 250_000;

  /** Largest stock count. */
  static final int MAX_STOCK = 5_000;

  /** Smallest sizes that still make a meaningful index. */
  static final int MIN_DOCUMENTS = 1_000;

  private static final String SKU = "sku";
  private static final String TITLE = "title";
  private static final String DESCRIPTION = "description";
  private static final String CATEGORY = "category";
  private static final String PRICE = "price";
  private static final String STOCK = "stock";

  private final AppSettings settings;
  private final SplittableRandom random;
  private final Catalogue catalogue;
  private final int documents;
  private final int hits;
  private final ByteBuffersDirectory directory = new ByteBuffersDirectory();
  private IndexWriter writer;
  private SearcherManager searchers;
  private long lastReopenNanos;

  /** A search service of the given size. */
  public SearchApp(AppSettings settings) {
    this.settings = settings;
    this.random = new SplittableRandom(settings.seed());
    this.catalogue = new Catalogue(random);
    this.documents = settings.scaledSize(BASE_DOCUMENTS, MIN_DOCUMENTS);
    this.hits = settings.scaledCost(BASE_HITS, 1);
  }

  @Override
  public void load() throws IOException {
    IndexWriterConfig config =
        new IndexWriterConfig(new StandardAnalyzer()).setRAMBufferSizeMB(RAM_BUFFER_MIB);
    writer = new IndexWriter(directory, config);
    for (int id = 0; id < documents; id++) {
      writer.addDocument(document(id));
    }
    writer.commit();
    searchers = new SearcherManager(writer, null);
    lastReopenNanos = System.nanoTime();
  }

  @Override
  public void operate() throws IOException {
    if (random.nextInt(100) < UPDATE_PERCENT) {
      int id = random.nextInt(documents);
      writer.updateDocument(new Term(SKU, sku(id)), document(id));
    } else {
      query();
    }
    long now = System.nanoTime();
    if (now - lastReopenNanos >= REOPEN_INTERVAL_NANOS) {
      searchers.maybeRefresh();
      lastReopenNanos = now;
    }
  }

  @Override
  public void close() throws IOException {
    if (searchers != null) {
      searchers.close();
    }
    if (writer != null) {
      writer.close();
    }
    directory.close();
  }

  private void query() throws IOException {
    IndexSearcher searcher = searchers.acquire();
    try {
      TopDocs top;
      int kind = random.nextInt(4);
      if (kind == 0) {
        top = searcher.search(keywords(), hits);
      } else if (kind == 1) {
        BooleanQuery query =
            new BooleanQuery.Builder()
                .add(keywords(), BooleanClause.Occur.MUST)
                .add(
                    new TermQuery(new Term(CATEGORY, Catalogue.pick(Catalogue.CATEGORIES, random))),
                    BooleanClause.Occur.FILTER)
                .build();
        top = searcher.search(query, hits);
      } else if (kind == 2) {
        int low = random.nextInt(MAX_PRICE_CENTS);
        Query query =
            new BooleanQuery.Builder()
                .add(
                    new TermQuery(new Term(DESCRIPTION, catalogue.queryWord(random))),
                    BooleanClause.Occur.MUST)
                .add(
                    IntPoint.newRangeQuery(PRICE, low, low + MAX_PRICE_CENTS / 10),
                    BooleanClause.Occur.FILTER)
                .build();
        top = searcher.search(query, hits, new Sort(new SortField(PRICE, SortField.Type.INT)));
      } else {
        top =
            searcher.search(
                new PhraseQuery(
                    1, DESCRIPTION, catalogue.queryWord(random), catalogue.queryWord(random)),
                hits);
      }
      StoredFields stored = searcher.storedFields();
      for (ScoreDoc hit : top.scoreDocs) {
        stored.document(hit.doc);
      }
    } finally {
      searchers.release(searcher);
    }
  }

  private Query keywords() {
    BooleanQuery.Builder query = new BooleanQuery.Builder();
    int terms = 2 + random.nextInt(2);
    for (int i = 0; i < terms; i++) {
      query.add(
          new TermQuery(new Term(DESCRIPTION, catalogue.queryWord(random))),
          BooleanClause.Occur.SHOULD);
    }
    return query.build();
  }

  private Document document(int id) {
    String category = Catalogue.CATEGORIES.get(id % Catalogue.CATEGORIES.size());
    String material = Catalogue.pick(Catalogue.MATERIALS, random);
    int price = random.nextInt(MAX_PRICE_CENTS);
    Document doc = new Document();
    doc.add(new StringField(SKU, sku(id), Field.Store.YES));
    doc.add(
        new TextField(
            TITLE, material + " " + category + " " + catalogue.text(random, 3), Field.Store.YES));
    doc.add(
        new TextField(
            DESCRIPTION,
            catalogue.text(random, settings.scaledCost(DESCRIPTION_WORDS, 1)),
            Field.Store.YES));
    doc.add(new StringField(CATEGORY, category, Field.Store.NO));
    doc.add(new SortedDocValuesField(CATEGORY, new BytesRef(category)));
    doc.add(new IntPoint(PRICE, price));
    doc.add(new NumericDocValuesField(PRICE, price));
    doc.add(new StoredField(PRICE, price));
    doc.add(new NumericDocValuesField(STOCK, random.nextInt(MAX_STOCK)));
    return doc;
  }

  private static String sku(int id) {
    return Catalogue.sku(Catalogue.CATEGORIES.get(id % Catalogue.CATEGORIES.size()), id);
  }
}
