using Triage.Core.Candidates;

namespace Triage.Core.Tests.Candidates;

public class BrokerBatchValidatorTests
{
    private static readonly DateTimeOffset Night = new(2026, 12, 3, 0, 0, 0, TimeSpan.Zero);

    internal static CandidateSubmission Valid(string id = "T-1") => new()
    {
        Id = id,
        RaDeg = 150.25,
        DecDeg = -12.5,
        DiscoveredUtc = Night.AddDays(-5),
        Redshift = 0.05,
        RedshiftError = 0.001,
        Photometry =
        [
            new PhotometrySubmission { TimeUtc = Night.AddDays(-8), Band = "r", MagAb = 20.9, UpperLimit = true },
            new PhotometrySubmission { TimeUtc = Night.AddDays(-5), Band = "r", MagAb = 19.2, MagAbError = 0.08 },
            new PhotometrySubmission { Mjd = 61374.5, Band = "g", FluxMicroJy = 80, FluxMicroJyError = 5 },
        ],
        SubtypeProbabilities = new Dictionary<string, double> { ["Ia"] = 0.7, ["II"] = 0.3 },
        ScienceWeight = 2,
        BrokerState = new BrokerState { PeakUtc = Night.AddDays(3), PeakBand = "r" },
    };

    private static BatchValidationResult Validate(params CandidateSubmission?[] candidates) =>
        BrokerBatchValidator.Validate(new BrokerBatch(candidates), DefaultSubtypeLabels.Set, new BatchLimits { NotAfterUtc = Night.AddDays(1) });

    [Fact]
    public void Validate_ValidCandidate_ConvertsUnitsAndSortsPhotometry()
    {
        var result = Validate(Valid());

        Assert.True(result.IsValid, string.Join("; ", result.Errors));
        var c = Assert.Single(result.Candidates);
        Assert.Equal(3, c.Photometry.Count);
        Assert.True(c.Photometry[0].IsUpperLimit);
        // 19.2 mag AB → 10^(0.4·(23.9 − 19.2)) µJy (AB zero point 3631 Jy; check-values §4a).
        Assert.Equal(Math.Pow(10, 0.4 * 4.7), c.Photometry[1].FluxMicroJy, 9);
        Assert.Equal(2, c.ScienceWeight);
    }

    public static TheoryData<string, Func<CandidateSubmission, CandidateSubmission>> BadCandidates => new()
    {
        { "candidates[0].id", c => c with { Id = null } },
        { "candidates[0].id", c => c with { Id = "has space" } },
        { "candidates[0].id", c => c with { Id = new string('x', 65) } },
        { "candidates[0].raDeg", c => c with { RaDeg = null } },
        { "candidates[0].raDeg", c => c with { RaDeg = 360 } },
        { "candidates[0].raDeg", c => c with { RaDeg = -0.1 } },
        { "candidates[0].raDeg", c => c with { RaDeg = double.NaN } },
        { "candidates[0].decDeg", c => c with { DecDeg = 90.5 } },
        { "candidates[0].decDeg", c => c with { DecDeg = double.PositiveInfinity } },
        { "candidates[0].discoveredUtc", c => c with { DiscoveredUtc = null } },
        { "candidates[0].discoveredUtc", c => c with { DiscoveredUtc = Night.AddDays(10) } },
        { "candidates[0].redshift", c => c with { Redshift = -0.1 } },
        { "candidates[0].redshiftError", c => c with { RedshiftError = 0 } },
        { "candidates[0].redshiftError", c => c with { Redshift = null } },
        { "candidates[0].scienceWeight", c => c with { ScienceWeight = 0 } },
        { "candidates[0].notes", c => c with { Notes = new string('n', 2001) } },
        { "candidates[0].subtypeProbabilities.Ib/c", c => c with { SubtypeProbabilities = new Dictionary<string, double> { ["Ia"] = 0.5, ["Ib/c"] = 0.5 } } },
        { "candidates[0].subtypeProbabilities.II", c => c with { SubtypeProbabilities = new Dictionary<string, double> { ["Ia"] = 1.1, ["II"] = -0.1 } } },
        { "candidates[0].subtypeProbabilities", c => c with { SubtypeProbabilities = new Dictionary<string, double> { ["Ia"] = 0.5, ["II"] = 0.3 } } },
        { "candidates[0].subtypeProbabilities", c => c with { SubtypeProbabilities = new Dictionary<string, double>() } },
        { "candidates[0].photometry", c => c with { Photometry = null } },
        { "candidates[0].photometry", c => c with { Photometry = [c.Photometry![0]] } },
        { "candidates[0].photometry[1].band", c => c with { Photometry = [c.Photometry![0], c.Photometry[1]! with { Band = "Q" }] } },
        { "candidates[0].photometry[1].band", c => c with { Photometry = [c.Photometry![0], c.Photometry[1]! with { Band = null }] } },
        { "candidates[0].photometry[0].magAbError", c => c with { Photometry = [c.Photometry![1]! with { MagAbError = null }] } },
        { "candidates[0].photometry[0].magAb", c => c with { Photometry = [c.Photometry![1]! with { MagAb = 40 }] } },
        { "candidates[0].photometry[0].timeUtc", c => c with { Photometry = [c.Photometry![1]! with { TimeUtc = null }] } },
        { "candidates[0].photometry[0].mjd", c => c with { Photometry = [c.Photometry![1]! with { Mjd = 61370 }] } },
        { "candidates[0].photometry[0].mjd", c => c with { Photometry = [c.Photometry![2]! with { Mjd = 1000 }] } },
        { "candidates[0].photometry[0].fluxMicroJyError", c => c with { Photometry = [c.Photometry![2]! with { FluxMicroJyError = -1 }] } },
        { "candidates[0].photometry[0].fluxMicroJy", c => c with { Photometry = [c.Photometry![2]! with { MagAb = 19 }] } },
        { "candidates[0].photometry[0].fluxMicroJy", c => c with { Photometry = [c.Photometry![2]! with { FluxMicroJy = double.NaN }] } },
        { "candidates[0].photometry[3]", c => c with { Photometry = [.. c.Photometry!, c.Photometry![1]] } },
        { "candidates[0].brokerState.peakBand", c => c with { BrokerState = new BrokerState { PeakBand = "X" } } },
        { "candidates[0].brokerState.peakMagAb", c => c with { BrokerState = new BrokerState { PeakMagAb = double.NaN } } },
    };

    [Theory]
    [MemberData(nameof(BadCandidates))]
    public void Validate_BadField_ErrorNamesItemAndField(string field, Func<CandidateSubmission, CandidateSubmission> spoil)
    {
        var result = Validate(spoil(Valid("bad-1")));

        Assert.False(result.IsValid);
        Assert.Empty(result.Candidates);
        var error = Assert.Single(result.Errors, e => e.Field == field);
        Assert.Equal(0, error.ItemIndex);
    }

    [Fact]
    public void Validate_DuplicateIdInBatch_NamesSecondItem()
    {
        var result = Validate(Valid("A"), Valid("B"), Valid("A"));

        var error = Assert.Single(result.Errors);
        Assert.Equal("candidates[2].id", error.Field);
        Assert.Equal("A", error.ItemId);
    }

    [Fact]
    public void Validate_PointsLessThanAMicrosecondApart_RefusedAsDuplicates()
    {
        // Times are stored to the microsecond (PostgreSQL timestamptz), so 0.3 µs apart is the same point.
        var t = Night.AddDays(-5);
        var c = Valid() with
        {
            Photometry =
            [
                new PhotometrySubmission { TimeUtc = t, Band = "r", MagAb = 19.2, MagAbError = 0.08 },
                new PhotometrySubmission { TimeUtc = t.AddTicks(3), Band = "r", MagAb = 19.3, MagAbError = 0.08 },
            ],
        };

        var result = Validate(c);

        Assert.False(result.IsValid);
        Assert.Contains(result.Errors, e => e.Field.EndsWith("photometry[1]", StringComparison.Ordinal) && e.Message.Contains("duplicates", StringComparison.Ordinal));
    }

    [Fact]
    public void Validate_OversizeBatch_Rejected()
    {
        var result = BrokerBatchValidator.Validate(new BrokerBatch([Valid("A"), Valid("B"), Valid("C")]), DefaultSubtypeLabels.Set, new BatchLimits { MaxCandidates = 2 });

        Assert.Equal("candidates", Assert.Single(result.Errors).Field);
    }

    [Fact]
    public void Validate_NullCandidate_NamesIndex()
    {
        var result = Validate(Valid("A"), null);

        Assert.Equal("candidates[1]", Assert.Single(result.Errors).Field);
    }

    [Fact]
    public void Validate_ProbabilitiesWithinTolerance_NormalisedWithNotice()
    {
        var result = Validate(Valid() with { SubtypeProbabilities = new Dictionary<string, double> { ["Ia"] = 0.62, ["II"] = 0.40 } });

        Assert.True(result.IsValid);
        var p = result.Candidates[0].SubtypeProbabilities!;
        Assert.Equal(1.0, p.Values.Sum(), 12);
        Assert.Equal(0.62 / 1.02, p["Ia"], 12);
        Assert.Single(result.Notices);
    }

    [Fact]
    public void Validate_TwoBadCandidates_ReportsBothAndKeepsNone()
    {
        var result = Validate(Valid("A") with { RaDeg = 400 }, Valid("B"), Valid("C") with { DecDeg = -91 });

        Assert.Equal(["candidates[0].raDeg", "candidates[2].decDeg"], result.Errors.Select(e => e.Field));
        Assert.Single(result.Candidates);
    }
}
