package triage.core.provenance;

import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.HexFormat;

/** SHA-256 fingerprints of files and byte streams, as lower-case hex. */
public final class Fingerprints {
  private Fingerprints() {
    // no instance
  }

  /** A fresh SHA-256 digest. */
  public static MessageDigest sha256() {
    try {
      return MessageDigest.getInstance("SHA-256");
    } catch (NoSuchAlgorithmException e) {
      throw new IllegalStateException("the JDK has no SHA-256", e);
    }
  }

  /** Lower-case hex of a finished digest. */
  public static String hex(MessageDigest digest) {
    return HexFormat.of().formatHex(digest.digest());
  }

  /** SHA-256 of a byte array. */
  public static String sha256(byte[] bytes) {
    MessageDigest d = sha256();
    d.update(bytes);
    return hex(d);
  }

  /** SHA-256 of a file's bytes. */
  public static String sha256(Path file) throws IOException {
    MessageDigest d = sha256();
    byte[] buffer = new byte[1 << 16];
    try (InputStream in = Files.newInputStream(file)) {
      for (int n; (n = in.read(buffer)) > 0; ) {
        d.update(buffer, 0, n);
      }
    }
    return hex(d);
  }
}
