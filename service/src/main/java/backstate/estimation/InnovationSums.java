package backstate.estimation;

import java.util.ArrayList;
import java.util.List;

/**
 * Collects the normalised innovations of the backward sweep per channel: into a
 * {@link ChannelAccumulator} as residuals ν·σ (so its RMS, largest residual, R², outliers beyond
 * {@link Conditioning#OUTLIER_SIGMAS}·σ and Ljung–Box test read in the channel's units), and into the
 * mean and variance of ν by Welford's update (Welford 1962, Technometrics 4(3)).
 *
 * <p>The sweep runs backwards in time, so each sequence arrives reversed; the Ljung–Box statistic
 * is unchanged by reversal (each lag's autocorrelation is a symmetric sum).
 */
final class InnovationSums implements BackwardSweep.InnovationSink {
    private final ChannelAccumulator[] channels;
    private final long[] counts;
    private final double[] means;
    private final double[] spreads;
    private final NoiseLevels noise;

    InnovationSums(SolveContext ctx, long[] presentCounts) {
        int p = ctx.p;
        this.noise = ctx.noise;
        this.channels = new ChannelAccumulator[p];
        for (int j = 0; j < p; j++) {
            channels[j] = new ChannelAccumulator(noise.sigma(j), presentCounts[j]);
        }
        this.counts = new long[p];
        this.means = new double[p];
        this.spreads = new double[p];
    }

    @Override
    public void add(int channel, double measured, double innovation) {
        channels[channel].add(measured, innovation * noise.sigma(channel));
        counts[channel]++;
        double delta = innovation - means[channel];
        means[channel] += delta / counts[channel];
        spreads[channel] += delta * (innovation - means[channel]);
    }

    List<ChannelDiagnostics> diagnostics() {
        List<ChannelDiagnostics> out = new ArrayList<>(channels.length);
        for (int j = 0; j < channels.length; j++) {
            out.add(channels[j].finish(noise.source(j)));
        }
        return out;
    }

    List<InnovationStatistics> statistics(List<ChannelDiagnostics> diagnostics) {
        List<InnovationStatistics> out = new ArrayList<>(channels.length);
        for (int j = 0; j < channels.length; j++) {
            long count = counts[j];
            ChannelDiagnostics d = diagnostics.get(j);
            out.add(new InnovationStatistics((int) count, count == 0 ? Double.NaN : means[j],
                    count < 2 ? Double.NaN : spreads[j] / (count - 1), d.ljungBoxQ(), d.ljungBoxLags(), d.ljungBoxP()));
        }
        return out;
    }
}
