using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <content>Import validation: every relation an exported selector state satisfies.</content>
public sealed partial class MethodSelector
{
    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count)
    {
        int k = _forecasters.Length;
        if (!WholeNumbers.IsWhole(state[3], count))
        {
            return "the switch count must be a whole number no larger than the period count";
        }

        if (!WholeNumbers.IsWhole(state[0] + 1, k) || !WholeNumbers.IsWhole(state[1] + 1, k))
        {
            return "the selected and challenging candidates must be −1 or a candidate's index";
        }

        if (!WholeNumbers.IsWhole(state[2], _options.PeriodsToSwitch - 1) || (state[2] == 0) != (state[1] < 0))
        {
            return "the challenger's run must be between 1 and PeriodsToSwitch − 1 with a challenger, and 0 without one";
        }

        if (state[1] >= 0 && (state[0] < 0 || state[1] == state[0]))
        {
            return "a challenger needs a selected candidate other than itself";
        }

        int incumbent = (int)state[0];
        int offset = HeaderLength;
        for (int i = 0; i < k; i++)
        {
            double scored = state[offset];
            double recent = state[offset + 1];
            if (!WholeNumbers.IsWhole(scored, count))
            {
                return string.Create(CultureInfo.InvariantCulture, $"candidate {i}'s scored periods must be a whole number no larger than the period count");
            }

            if (recent < 0 || (scored == 0 && recent != 0))
            {
                return string.Create(CultureInfo.InvariantCulture, $"candidate {i}'s recent error must be ≥ 0, and 0 before its first scored period");
            }

            int length = _forecasters[i].StateLength;
            ReadOnlySpan<double> part = state.Slice(offset + PerCandidateLength, length);
            if (part[0] != count)
            {
                return string.Create(CultureInfo.InvariantCulture, $"candidate {i}'s forecaster has seen a different number of actuals than the selector");
            }

            // A probe forecaster per candidate checks the candidate's part with the candidate's own rules; made on the first
            // import and reused, so a restating series (which imports on every late event) allocates nothing after that.
            _probes ??= new Forecaster[k];
            Forecaster probe = _probes[i] ??= _options.Candidates[i].CreateForecaster();
            try
            {
                probe.ImportState(part);
            }
            catch (ArgumentException ex)
            {
                return string.Create(CultureInfo.InvariantCulture, $"candidate {i}'s part does not fit: {ex.Message}");
            }

            if (i == incumbent && !probe.IsWarm)
            {
                return "the selected candidate's forecaster cannot forecast";
            }

            offset += PerCandidateLength + length;
        }

        return null;
    }
}
