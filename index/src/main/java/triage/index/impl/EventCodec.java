package triage.index.impl;

import java.io.IOException;
import org.apache.lucene.codecs.FilterCodec;
import org.apache.lucene.codecs.PointsFormat;
import org.apache.lucene.codecs.PointsReader;
import org.apache.lucene.codecs.PointsWriter;
import org.apache.lucene.codecs.lucene103.Lucene103Codec;
import org.apache.lucene.codecs.lucene90.Lucene90PointsFormat;
import org.apache.lucene.index.SegmentReadState;
import org.apache.lucene.index.SegmentWriteState;

/**
 * The codec of the event index (format 3 on): Lucene's own codec, with one change in how point trees are written
 * at flush. One-dimensional 4- and 8-byte point fields (every point field of an event) are sorted in primitive
 * arrays by {@link SortedPointsWriter} instead of Lucene's in-place radix sort over its byte pool; the files written
 * are Lucene 9.0's points format, identical to those of the default codec (tested), and are read by Lucene's reader.
 *
 * <p>It is registered as a service ({@code META-INF/services/org.apache.lucene.codecs.Codec}) because every segment
 * records its codec's name and a reader looks the codec up by that name.
 */
public final class EventCodec extends FilterCodec {
  /** The name recorded in each segment. */
  public static final String NAME = "TriageEvent1";

  /** Lucene's points format, for reading and for merging. */
  private final PointsFormat lucenePoints = new Lucene90PointsFormat();

  /** The points format: Lucene's reader, the sorting writer. */
  private final PointsFormat points = new PointsFormat() {
    @Override
    public PointsWriter fieldsWriter(SegmentWriteState state) throws IOException {
      return new SortedPointsWriter(state);
    }

    @Override
    public PointsReader fieldsReader(SegmentReadState state) throws IOException {
      return lucenePoints.fieldsReader(state);
    }
  };

  /** Used by Lucene's service loader; the delegate is named, not looked up, since a codec's constructor may not. */
  public EventCodec() {
    super(NAME, new Lucene103Codec());
  }

  @Override
  public PointsFormat pointsFormat() {
    return points;
  }
}
