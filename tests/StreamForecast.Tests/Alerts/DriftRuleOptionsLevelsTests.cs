using StreamForecast.Alerts;

namespace StreamForecast.Tests.Alerts;

public sealed class DriftRuleOptionsLevelsTests
{
    public static TheoryData<DriftRuleOptions> Rules => new()
    {
        new TrackingSignalRuleOptions(limit: 4, clearLevel: 3, escalationLevel: 6, warmUpPeriods: 5, periodsToRaise: 2, periodsToClear: 3),
        new TriggSignalRuleOptions(limit: 0.5, clearLevel: 0.25, escalationLevel: 0.75, warmUpPeriods: 4),
        new CusumRuleOptions(decisionInterval: 5, referenceValue: 0.4, clearLevel: 2, escalationLevel: 10, resetAfterAlarm: true, warmUpPeriods: 6),
    };

    [Theory]
    [MemberData(nameof(Rules))]
    public void WithRaiseLevel_AnyRule_ScalesTheLevelsAndKeepsEveryOtherSetting(DriftRuleOptions rule)
    {
        double level = rule.RaiseLevel * 0.8;
        DriftRuleOptions rebuilt = rule.WithRaiseLevel(level);
        Assert.Equal(rule.GetType(), rebuilt.GetType());
        Assert.Equal(level, rebuilt.RaiseLevel);
        Assert.Equal(rule.ClearLevel / rule.RaiseLevel * level, rebuilt.ClearLevel, 12);
        Assert.Equal(rule.EscalationLevel / rule.RaiseLevel * level, rebuilt.EscalationLevel, 12);
        Assert.Equal((rule.WarmUpPeriods, rule.PeriodsToRaise, rule.PeriodsToClear), (rebuilt.WarmUpPeriods, rebuilt.PeriodsToRaise, rebuilt.PeriodsToClear));
        Assert.Equal(rule with { }, rule); // the original is untouched
        if (rule is CusumRuleOptions c)
        {
            var rc = (CusumRuleOptions)rebuilt;
            Assert.Equal((c.ReferenceValue, c.ResetAfterAlarm), (rc.ReferenceValue, rc.ResetAfterAlarm));
        }
    }

    [Fact]
    public void WithRaiseLevel_TriggNearItsBound_KeepsEscalationWithinOne()
    {
        var rule = new TriggSignalRuleOptions(limit: 0.5, clearLevel: 0.25, escalationLevel: 0.9);
        DriftRuleOptions rebuilt = rule.WithRaiseLevel(0.8);
        Assert.Equal(1.0, rebuilt.EscalationLevel);
        Assert.Equal(1.0, rule.MaxRaiseLevel);
        Assert.Throws<ArgumentOutOfRangeException>(() => rule.WithRaiseLevel(1.5));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions().WithRaiseLevel(0));
    }
}
