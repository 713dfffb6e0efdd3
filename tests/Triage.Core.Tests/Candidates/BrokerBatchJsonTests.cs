using Triage.Core.Candidates;

namespace Triage.Core.Tests.Candidates;

public class BrokerBatchJsonTests
{
    private const string Good = """
        {"candidates":[{"id":"J-1","raDeg":10.5,"decDeg":-5,"discoveredUtc":"2026-12-01T03:00:00Z",
          "photometry":[{"mjd":61375.1,"band":"r","magAb":19.5,"magAbError":0.1}]}]}
        """;

    [Fact]
    public void TryParse_GoodBatch_RoundTrips()
    {
        Assert.True(BrokerBatchJson.TryParse(Good, out var batch, out _));
        Assert.True(BrokerBatchJson.TryParse(BrokerBatchJson.Serialize(batch!), out var again, out _));

        Assert.Equal("J-1", again!.Candidates![0]!.Id);
        Assert.Equal(61375.1, again.Candidates[0]!.Photometry![0]!.Mjd);
    }

    [Theory]
    [InlineData("""{"candidates":[{"id":"a","raDeg":"ten"}]}""", "candidates[0].raDeg")]
    [InlineData("""{"candidates":[{"id":"a","raDeg":NaN}]}""", "candidates[0]")]
    [InlineData("""{"candidates":[{"id":"a","ra":1}]}""", "candidates[0]")]
    [InlineData("""{"candidates":[{"id":"a","photometry":[{"band":"r","upperLimit":"yes"}]}]}""", "candidates[0].photometry[0].upperLimit")]
    [InlineData("""{"candidates":[{"id":"a","discoveredUtc":"yesterday"}]}""", "candidates[0].discoveredUtc")]
    [InlineData("""{"candidates":[{"id":"a","subtypeProbabilities":{"Ia":0.5,"Ia":0.5}}]}""", "candidates[0].subtypeProbabilities")]
    [InlineData("""{"candidates":[""", "candidates")]
    public void TryParse_Malformed_ErrorNamesPath(string json, string fieldPrefix)
    {
        Assert.False(BrokerBatchJson.TryParse(json, out _, out var error));
        Assert.StartsWith(fieldPrefix, error!.Field);
    }

    [Fact]
    public void TryParse_WrongTypeInThirdCandidate_CarriesItemIndex()
    {
        Assert.False(BrokerBatchJson.TryParse("""{"candidates":[{},{},{"decDeg":true}]}""", out _, out var error));
        Assert.Equal(2, error!.ItemIndex);
        Assert.Equal("candidates[2].decDeg", error.Field);
    }
}
