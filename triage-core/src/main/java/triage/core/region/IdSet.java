package triage.core.region;

import com.fasterxml.jackson.annotation.JsonCreator;
import com.fasterxml.jackson.annotation.JsonProperty;
import java.io.ByteArrayOutputStream;
import java.util.Arrays;
import java.util.Base64;
import triage.core.provenance.Fingerprints;

/**
 * An exact set of event ids, stored compactly: the sorted distinct ids as zigzag-encoded varint differences,
 * in base64, with their count and the SHA-256 of the encoding (so a file edited by hand is noticed).
 *
 * @param count the number of ids
 * @param sha256 SHA-256 of the encoded bytes
 * @param data the encoded ids (base64 of zigzag varint deltas of the sorted ids)
 */
public record IdSet(long count, String sha256, String data) {
  /** Checks the fingerprint. */
  @JsonCreator
  public IdSet(@JsonProperty("count") long count, @JsonProperty("sha256") String sha256,
      @JsonProperty("data") String data) {
    if (sha256 == null || data == null) {
      throw new IllegalArgumentException("an id set needs 'count', 'sha256' and 'data'");
    }
    byte[] bytes = Base64.getDecoder().decode(data);
    if (!Fingerprints.sha256(bytes).equals(sha256)) {
      throw new IllegalArgumentException("the id set's fingerprint does not match its data (was it edited?)");
    }
    long held = 0;
    for (byte b : bytes) {
      held += (b & 0x80) == 0 ? 1 : 0;
    }
    if (held != count || (bytes.length > 0 && (bytes[bytes.length - 1] & 0x80) != 0)) {
      throw new IllegalArgumentException("the id set says " + count + " ids but its data holds " + held);
    }
    this.count = count;
    this.sha256 = sha256;
    this.data = data;
  }

  /** The set of the given ids (duplicates collapse). */
  public static IdSet of(long[] ids) {
    long[] sorted = ids.clone();
    Arrays.sort(sorted);
    ByteArrayOutputStream out = new ByteArrayOutputStream();
    long previous = 0;
    long n = 0;
    for (int i = 0; i < sorted.length; i++) {
      if (i > 0 && sorted[i] == sorted[i - 1]) {
        continue;
      }
      long delta = sorted[i] - previous;
      long zigzag = (delta << 1) ^ (delta >> 63);
      while ((zigzag & ~0x7FL) != 0) {
        out.write((int) ((zigzag & 0x7F) | 0x80));
        zigzag >>>= 7;
      }
      out.write((int) zigzag);
      previous = sorted[i];
      n++;
    }
    byte[] bytes = out.toByteArray();
    return new IdSet(n, Fingerprints.sha256(bytes), Base64.getEncoder().encodeToString(bytes));
  }

  /** The ids, sorted. */
  public long[] ids() {
    byte[] bytes = Base64.getDecoder().decode(data);
    long[] out = new long[(int) count];
    long previous = 0;
    int at = 0;
    for (int i = 0; i < out.length; i++) {
      long zigzag = 0;
      int shift = 0;
      while (true) {
        int b = bytes[at++] & 0xFF;
        zigzag |= (long) (b & 0x7F) << shift;
        if ((b & 0x80) == 0) {
          break;
        }
        shift += 7;
      }
      long delta = (zigzag >>> 1) ^ -(zigzag & 1);
      previous += delta;
      out[i] = previous;
    }
    return out;
  }

  /** How many of the given ids are in the set. */
  public long overlap(long[] others) {
    long[] mine = ids();
    long n = 0;
    for (long id : others) {
      if (Arrays.binarySearch(mine, id) >= 0) {
        n++;
      }
    }
    return n;
  }
}
