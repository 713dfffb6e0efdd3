using Triage.Api.Jobs;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;
using Triage.Learning;

namespace Triage.Api.Calibrations;

/// <summary>
/// The library a calibration job or part works on, kept in memory after use so that the parts of one calibration that
/// one replica runs one after the other read (or generate) it once: the last library is kept until
/// <see cref="KeepFor"/> passes without a use, then dropped (a library can take hundreds of MB). A folder library is
/// known by its path and the newest write time and number of its files, so a changed folder is read again.
/// </summary>
public sealed class CalibrationLibraries(TimeProvider clock) : IDisposable
{
    /// <summary>How long an unused library stays in memory (2 min).</summary>
    public static readonly TimeSpan KeepFor = TimeSpan.FromMinutes(2);

    private readonly object _gate = new();
    private string? _key;
    private SpectralLibrary? _library;
    private ITimer? _drop;

    /// <summary>Generates the synthetic library or reads the folder one, or returns the one kept from the last use.</summary>
    /// <exception cref="JobInputException">The folder cannot be read or its library does not import.</exception>
    public SpectralLibrary Get(CalibrationJobInput input)
    {
        var key = Key(input);
        lock (_gate)
        {
            if (_key == key && _library is { } kept)
            {
                Touch();
                return kept;
            }
        }
        var library = Load(input);
        lock (_gate)
        {
            (_key, _library) = (key, library);
            Touch();
        }
        return library;
    }

    /// <summary>True while a library is kept (for tests).</summary>
    public bool Holding
    {
        get
        {
            lock (_gate)
            {
                return _library is not null;
            }
        }
    }

    private void Touch()
    {
        _drop?.Dispose();
        _drop = clock.CreateTimer(_ =>
        {
            lock (_gate)
            {
                (_key, _library) = (null, null);
            }
        }, null, KeepFor, Timeout.InfiniteTimeSpan);
    }

    private static string Key(CalibrationJobInput input)
    {
        if (input.Library == "synthetic")
        {
            return FormattableString.Invariant($"synthetic/{input.Objects}/{input.Seed}");
        }
        try
        {
            var files = new DirectoryInfo(input.LibraryPath!).EnumerateFiles("*", SearchOption.AllDirectories).ToList();
            return FormattableString.Invariant($"folder/{input.LibraryPath}/{files.Count}/{(files.Count == 0 ? 0 : files.Max(f => f.LastWriteTimeUtc.Ticks))}");
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new JobInputException($"The library folder could not be read: {e.Message}");
        }
    }

    private static SpectralLibrary Load(CalibrationJobInput input)
    {
        if (input.Library == "synthetic")
        {
            return SyntheticLibrary.Generate(new SynthOptions { Objects = input.Objects, Seed = input.Seed }).Library;
        }
        try
        {
            return LibraryFiles.Load(input.LibraryPath!, Taxonomy.Default);
        }
        catch (LibraryImportException e)
        {
            throw new JobInputException("The library was refused: " + string.Join("; ", e.Errors.Take(20).Select(x => x.ToString())));
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new JobInputException($"The library folder could not be read: {e.Message}");
        }
    }

    public void Dispose() => _drop?.Dispose();
}
