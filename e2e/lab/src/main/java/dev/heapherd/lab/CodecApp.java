package dev.heapherd.lab;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;

/**
 * {@code codec}: a Jackson service holding a working set of shipment documents as Java objects. An
 * operation takes one shipment, appends a tracking event, serialises it to JSON, parses the JSON
 * back into records (as a message bus round trip does) and stores the copy in place of the old one;
 * some operations also read the JSON as a tree to extract fields, as a filter would.
 */
public final class CodecApp implements LabApp {

  /** Shipments in the working set at size scale 1: about 120 MiB of objects. */
  static final int BASE_SHIPMENTS = 24_000;

  /** Parcels of a shipment, and parts in a parcel, at cost scale 1 (1 to this many). */
  static final int BASE_PARCELS = 4;

  /** Tracking events kept per shipment; the oldest goes when a new one arrives. */
  static final int MAX_EVENTS = 12;

  /** Percent of operations that also read the JSON as a tree. */
  static final int TREE_PERCENT = 30;

  /** Largest parcel weight in grams. */
  static final int MAX_GRAMS = 40_000;

  /** Milliseconds between generated tracking events: about a quarter of an hour. */
  static final long EVENT_SPACING_MILLIS = 900_000;

  /** Smallest working set. */
  static final int MIN_SHIPMENTS = 100;

  static final int PERCENT = 100;

  /** Part numbers parcels draw from: the catalogue's six-digit range. */
  static final int CATALOGUE_PARTS = 1_000_000;

  /** House numbers and postcode districts addresses draw from. */
  static final int HOUSE_NUMBERS = 200;

  static final int POSTCODE_DISTRICTS = 99;

  private static final List<String> EVENT_KINDS =
      List.of("booked", "collected", "sorted", "in-transit", "at-depot", "out-for-delivery");

  /** A postal address. */
  public record Address(String name, String street, String town, String region, String postcode) {}

  /** One parcel of a shipment and the parts in it. */
  public record Parcel(String label, int grams, List<String> skus) {}

  /** A scan of the shipment somewhere on its way. */
  public record TrackingEvent(long atMillis, String kind, String depot, String note) {}

  /** A shipment of parts to a customer. */
  public record Shipment(
      String id,
      String reference,
      Address shipper,
      Address consignee,
      List<Parcel> parcels,
      List<TrackingEvent> events,
      Map<String, String> attributes) {}

  private final AppSettings settings;
  private final SplittableRandom random;
  private final Catalogue catalogue;
  private final ObjectMapper json = new ObjectMapper();
  private final Shipment[] shipments;
  private long clockMillis;

  /** A codec service of the given size. */
  public CodecApp(AppSettings settings) {
    this.settings = settings;
    random = new SplittableRandom(settings.seed());
    catalogue = new Catalogue(random);
    shipments = new Shipment[settings.scaledSize(BASE_SHIPMENTS, MIN_SHIPMENTS)];
  }

  /**
   * Loads the working set as operations leave it: every shipment with its full tracking history and
   * stored as a parsed copy (whose strings no longer share the generator's), so the live set does
   * not keep growing for minutes after loading while operations replace shipments.
   */
  @Override
  public void load() throws IOException {
    for (int i = 0; i < shipments.length; i++) {
      shipments[i] = json.readValue(json.writeValueAsBytes(shipment(i)), Shipment.class);
    }
  }

  @Override
  public void operate() throws IOException {
    int index = random.nextInt(shipments.length);
    Shipment old = shipments[index];
    List<TrackingEvent> events = new ArrayList<>(old.events());
    events.add(event());
    if (events.size() > MAX_EVENTS) {
      events.remove(0);
    }
    Shipment updated =
        new Shipment(
            old.id(),
            old.reference(),
            old.shipper(),
            old.consignee(),
            old.parcels(),
            events,
            old.attributes());
    byte[] bytes = json.writeValueAsBytes(updated);
    if (random.nextInt(PERCENT) < TREE_PERCENT) {
      JsonNode tree = json.readTree(bytes);
      tree.path("consignee").path("postcode").asText();
      tree.path("events").size();
    }
    shipments[index] = json.readValue(bytes, Shipment.class);
  }

  private Shipment shipment(int index) {
    List<Parcel> parcels = new ArrayList<>();
    int parcelCount = 1 + random.nextInt(settings.scaledCost(BASE_PARCELS, 1));
    for (int p = 0; p < parcelCount; p++) {
      List<String> skus = new ArrayList<>();
      int items = 1 + random.nextInt(settings.scaledCost(BASE_PARCELS, 1));
      for (int s = 0; s < items; s++) {
        String category = Catalogue.pick(Catalogue.CATEGORIES, random);
        skus.add(Catalogue.sku(category, random.nextInt(CATALOGUE_PARTS)));
      }
      parcels.add(new Parcel("P" + index + "-" + p, 1 + random.nextInt(MAX_GRAMS), skus));
    }
    List<TrackingEvent> events = new ArrayList<>();
    for (int e = 0; e < MAX_EVENTS; e++) {
      events.add(event());
    }
    Map<String, String> attributes = new LinkedHashMap<>();
    attributes.put("service", random.nextBoolean() ? "express" : "standard");
    attributes.put("incoterm", random.nextBoolean() ? "DAP" : "EXW");
    attributes.put("instructions", catalogue.text(random, 6));
    return new Shipment(
        "SH" + index,
        "KV-ORD-" + random.nextInt(Integer.MAX_VALUE),
        address(),
        address(),
        parcels,
        events,
        attributes);
  }

  private Address address() {
    return new Address(
        catalogue.text(random, 2) + " Ltd",
        (1 + random.nextInt(HOUSE_NUMBERS)) + " " + catalogue.word(random) + " Road",
        catalogue.word(random),
        Catalogue.pick(Catalogue.REGIONS, random),
        "KV" + random.nextInt(POSTCODE_DISTRICTS) + " " + random.nextInt(POSTCODE_DISTRICTS));
  }

  private TrackingEvent event() {
    clockMillis += EVENT_SPACING_MILLIS;
    return new TrackingEvent(
        clockMillis,
        Catalogue.pick(EVENT_KINDS, random),
        Catalogue.pick(Catalogue.REGIONS, random) + "-depot",
        catalogue.text(random, 3));
  }
}
