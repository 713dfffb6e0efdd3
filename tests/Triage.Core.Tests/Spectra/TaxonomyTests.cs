using Triage.Core.Spectra;

namespace Triage.Core.Tests.Spectra;

public class TaxonomyTests
{
    [Theory]
    // Grouping from issue 3 (common practice of the trade).
    [InlineData("Ia-91bg-like", "thermonuclear")]
    [InlineData("Ia-CSM", "thermonuclear")]
    [InlineData("IIb", "stripped-envelope")]
    [InlineData("Ibn", "stripped-envelope")]
    [InlineData("IIn", "hydrogen-rich")]
    [InlineData("SLSN-II", "superluminous")]
    public void Default_Label_HasBroadClass(string label, string broad) => Assert.Equal(broad, Taxonomy.Default.BroadClassOf(label));

    [Fact]
    public void Default_HasFourteenLabelsInFourClasses()
    {
        Assert.Equal(14, Taxonomy.Default.Subtypes.Count);
        Assert.Equal(4, Taxonomy.Default.Classes.Count);
    }

    [Fact]
    public void ShippedFile_EqualsBuiltInDefault()
    {
        string path = Path.Combine(RepoRoot(), "config", "taxonomy.txt");
        var shipped = Taxonomy.Parse(File.ReadAllText(path));
        Assert.Equal(Taxonomy.Default.Subtypes, shipped.Subtypes);
        Assert.Equal(Taxonomy.Default.Classes.Select(c => c.Name), shipped.Classes.Select(c => c.Name));
    }

    [Theory]
    [InlineData("thermonuclear Ia, Iax\n", "line 1")]
    [InlineData("a: Ia, Ib\nb: Ib\n", "line 2: label 'Ib' already listed on line 1")]
    [InlineData("a: Ia,\n", "line 1: empty subtype label")]
    [InlineData("# only a comment\n", "lists no class")]
    [InlineData("a: Ia\na: Ib\n", "line 2: broad class 'a' appears twice")]
    public void TryParse_Malformed_NamesLine(string text, string expected)
    {
        Assert.False(Taxonomy.TryParse(text, out var t, out var errors));
        Assert.Null(t);
        Assert.Contains(errors, e => e.Contains(expected, StringComparison.Ordinal));
    }

    [Fact]
    public void ToText_RoundTrips()
    {
        var again = Taxonomy.Parse(Taxonomy.Default.ToText());
        Assert.Equal(Taxonomy.Default.Subtypes, again.Subtypes);
    }

    internal static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Triage.sln"))) dir = dir.Parent;
        return dir?.FullName ?? throw new DirectoryNotFoundException("Triage.sln not found above the test binaries.");
    }
}
