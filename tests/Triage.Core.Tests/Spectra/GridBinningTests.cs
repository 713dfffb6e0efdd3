using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;

namespace Triage.Core.Tests.Spectra;

public class GridBinningTests
{
    [Theory]
    // Oracle test (style guide): the fixed weights against FluxRebinning.ToGrid's running integral on an irregular
    // grid, one by one and in blocks of eight. Only the order of the sums differs: tolerance 1e-10 of the mean value.
    // Bins much wider than the samples (30), about as wide (3000) and narrower (20 000, rows of two samples).
    [InlineData(30)]
    [InlineData(3000)]
    [InlineData(20000)]
    public void Apply_IrregularSamples_MatchesToGrid(int bins)
    {
        var rng = new Random(17);
        var w = Enumerable.Range(0, 4000).Select(i => 4000 + i * 1.0 + 0.3 * rng.NextDouble()).ToArray();
        var curves = Enumerable.Range(0, 10).Select(_ => w.Select(_ => 1 + rng.NextDouble()).ToArray()).ToArray();
        var grid = LogWavelengthGrid.WithCount(w[0] * 0.999, w[^1], bins); // the first bin starts before the samples: NaN
        var binning = GridBinning.Build(w, grid);
        var many = binning.Apply(curves);
        for (int c = 0; c < curves.Length; c++)
        {
            var expected = FluxRebinning.ToGrid(w, curves[c], grid);
            Assert.True(double.IsNaN(expected[0]));
            foreach (var actual in new[] { binning.Apply(curves[c]), many[c] })
                for (int k = 0; k < bins; k++)
                    if (double.IsNaN(expected[k])) Assert.True(double.IsNaN(actual[k]), $"bin {k}");
                    else Assert.Equal(expected[k], actual[k], 1.5e-10);
        }
    }

    [Fact]
    public void Apply_ValuesWithNaN_AreBinnedAsToGridBinsThem()
    {
        var w = Enumerable.Range(0, 500).Select(i => 5000 + 2.0 * i).ToArray();
        var f = w.Select(x => Math.Sin(x / 50)).ToArray();
        f[100] = double.NaN;
        var grid = LogWavelengthGrid.WithCount(w[0], w[^1], 60);
        Assert.Equal(FluxRebinning.ToGrid(w, f, grid), GridBinning.Build(w, grid).Apply(f));
    }

    [Theory]
    [InlineData(5)]
    [InlineData(1500)]
    [InlineData(4000)]
    public void NoiseShapes_SharedWeights_MatchOneByOne(double resolution)
    {
        // The calibration's batched noise shapes against SpectrumNoise.NoiseShape for each spectrum (rounding only).
        var lib = SyntheticLibrary.Generate(new SynthOptions { Objects = 14, MinObjectsPerSubtype = 1, MeanSpectraPerObject = 2, Seed = 8 })
            .Library.Spectra.Take(10).Select(s => s.Spectrum).ToList();
        lib.Add(lib[0] with { FluxError = null });
        var grid = LogWavelengthGrid.ForResolution(lib[0].MinWavelengthAngstrom, lib[0].MaxWavelengthAngstrom, resolution, 2);
        var shapes = SpectrumNoise.NoiseShapes(lib, NoiseShapeBinning.Build(lib[0].WavelengthAngstrom, grid));
        Assert.Null(shapes[^1]);
        for (int i = 0; i < lib.Count - 1; i++)
        {
            var expected = SpectrumNoise.NoiseShape(lib[i], grid)!;
            Assert.Equal(expected.Length, shapes[i]!.Length);
            for (int k = 0; k < expected.Length; k++) Assert.Equal(expected[k], shapes[i]![k], 1e-10);
        }
    }
}
