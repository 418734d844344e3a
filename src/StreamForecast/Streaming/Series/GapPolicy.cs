namespace StreamForecast.Streaming;

/// <summary>What a closed period with no observations means for a series.</summary>
public enum GapPolicy
{
    /// <summary>The series was live and nothing happened: the period's actual is 0 and it is scored (a shop that sold nothing).</summary>
    Zero = 0,

    /// <summary>No data exists for the period: the forecaster is not updated and no error is scored (a sensor that was offline).</summary>
    Missing = 1,

    /// <summary>The last actual is repeated into the forecaster but not scored (an imputation); missing until a first actual exists.</summary>
    CarryForward = 2,
}
