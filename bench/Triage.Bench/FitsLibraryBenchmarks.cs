using System.Globalization;
using System.IO.Compression;
using BenchmarkDotNet.Attributes;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Fits;
using Triage.Learning;

namespace Triage.Bench;

/// <summary>
/// Reading a library of 3 000 FITS spectra of 4 000 pixels each (32-bit float primary images, linear
/// vacuum solution, 3500–9500 Å), as `triage library check` and `calibrate` do: manifest, open, parse,
/// wavelength solution, validation. <c>LoadFolder</c> reads real files (plain or gzip);
/// <c>ParseInMemory</c> parses the same bytes from memory (the core alone, no file system).
/// Target from issue 15: under 3 s for the folder.
/// </summary>
[Config(typeof(InProcessConfig))]
[MemoryDiagnoser]
public class FitsLibraryBenchmarks
{
    private const int Spectra = 3000, Pixels = 4000;
    private string _folder = null!;
    private byte[][] _bytes = null!;

    [Params(false, true)]
    public bool Gzip { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _folder = Path.Combine(Path.GetTempPath(), "triage-fits-bench-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(Path.Combine(_folder, "spectra"));
        var subtypes = Taxonomy.Default.Subtypes.ToArray();
        var rng = new Random(15);
        var flux = new float[Pixels];
        _bytes = new byte[Spectra][];
        using var manifest = new StreamWriter(Path.Combine(_folder, LibraryImport.ManifestFileName));
        manifest.Write("file,object_id,subtype,phase_days,redshift,source_resolution\n");
        for (int i = 0; i < Spectra; i++)
        {
            for (int p = 0; p < Pixels; p++) flux[p] = (float)(1 + 0.3 * Math.Sin(p / 50.0) + 0.05 * rng.NextDouble());
            var ms = new MemoryStream();
            FitsSpectrumWriter.WriteImage(ms, flux, 3500, 1.5, resolvingPower: 2000);
            _bytes[i] = ms.ToArray();
            string name = string.Create(CultureInfo.InvariantCulture, $"spectra/s{i:0000}.fits{(Gzip ? ".gz" : "")}");
            using (var f = File.Create(Path.Combine(_folder, name)))
            {
                if (Gzip)
                {
                    using var gz = new GZipStream(f, CompressionLevel.Fastest);
                    gz.Write(_bytes[i]);
                }
                else f.Write(_bytes[i]);
            }
            manifest.Write(string.Create(CultureInfo.InvariantCulture,
                $"{name},OBJ{i / 3:0000},{subtypes[i / 3 % subtypes.Length]},{i % 3 * 10},0.01,\n"));
        }
    }

    [GlobalCleanup]
    public void Cleanup() => Directory.Delete(_folder, true);

    [Benchmark]
    public int LoadFolder() => LibraryFiles.Load(_folder, Taxonomy.Default).Spectra.Count;

    [Benchmark]
    public int ParseInMemory()
    {
        int n = 0;
        var options = new SpectrumReadOptions();
        foreach (var b in _bytes)
            n += FitsSpectrumReader.Read(new MemoryStream(b, false), null, options).Spectrum.Count;
        return n;
    }
}
