package triage.index.impl;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import org.apache.lucene.store.ByteArrayDataInput;
import org.apache.lucene.store.ByteBuffersDataOutput;
import triage.core.sample.EventBatch;

/**
 * The stored form of one event: line (vlong), weight, features, variation weights up/down, external score
 * (raw IEEE-754 bits, so values read back bit-exact), id, run, block (zigzag vlong), category texts (UTF-8).
 */
final class EventCodec {
  private EventCodec() {
    // no instance
  }

  /** Encodes event i of a batch into a reusable output and returns a copy of the bytes. */
  static byte[] encode(EventBatch b, int i, ByteBuffersDataOutput out) throws IOException {
    out.reset();
    out.writeVLong(b.line(i));
    out.writeLong(Double.doubleToRawLongBits(b.weight(i)));
    for (int k = 0; k < b.featureCount(); k++) {
      out.writeLong(Double.doubleToRawLongBits(b.feature(i, k)));
    }
    for (int j = 0; j < b.variationCount(); j++) {
      out.writeLong(Double.doubleToRawLongBits(b.up(i, j)));
      out.writeLong(Double.doubleToRawLongBits(b.down(i, j)));
    }
    if (b.hasScore()) {
      out.writeLong(Double.doubleToRawLongBits(b.score(i)));
    }
    out.writeZLong(b.id(i));
    out.writeZLong(b.run(i));
    out.writeZLong(b.block(i));
    for (int k = 0; k < b.categoryCount(); k++) {
      byte[] text = b.category(i, k).getBytes(StandardCharsets.UTF_8);
      out.writeVInt(text.length);
      out.writeBytes(text, text.length);
    }
    return out.toArrayCopy();
  }

  /** The decoded parts of a stored event. */
  record Decoded(long line, double weight, double[] features, double[] ups, double[] downs, double score, long id,
      long run, long block, String[] categories) {}

  /** Decodes a stored event, given the schema's sizes. */
  static Decoded decode(byte[] bytes, int features, int variations, boolean hasScore, int categories)
      throws IOException {
    ByteArrayDataInput in = new ByteArrayDataInput(bytes);
    long line = in.readVLong();
    double w = Double.longBitsToDouble(in.readLong());
    double[] x = new double[features];
    for (int k = 0; k < features; k++) {
      x[k] = Double.longBitsToDouble(in.readLong());
    }
    double[] ups = new double[variations];
    double[] downs = new double[variations];
    for (int j = 0; j < variations; j++) {
      ups[j] = Double.longBitsToDouble(in.readLong());
      downs[j] = Double.longBitsToDouble(in.readLong());
    }
    double score = hasScore ? Double.longBitsToDouble(in.readLong()) : Double.NaN;
    long id = in.readZLong();
    long run = in.readZLong();
    long block = in.readZLong();
    String[] cats = new String[categories];
    for (int k = 0; k < categories; k++) {
      byte[] text = new byte[in.readVInt()];
      in.readBytes(text, 0, text.length);
      cats[k] = new String(text, StandardCharsets.UTF_8);
    }
    return new Decoded(line, w, x, ups, downs, score, id, run, block, cats);
  }
}
