using Triage.Core.Roster;

namespace Triage.Core.Tests.Architecture;

/// <summary>The core stays pure: no database, web, logging, ML or solver libraries.</summary>
public sealed class CorePurityTests
{
    private static readonly string[] Forbidden =
    [
        "Npgsql", "Dapper", "Microsoft.AspNetCore", "Serilog", "Microsoft.ML", "Google.OrTools",
        "Microsoft.Extensions.Logging", "System.Data", "System.Net.Http",
    ];

    [Fact]
    public void CoreAssembly_ReferencesNoAdapterOrHostLibrary()
    {
        var core = typeof(Site).Assembly;
        var offending = core.GetReferencedAssemblies()
            .Where(r => Forbidden.Any(f => r.Name!.StartsWith(f, StringComparison.Ordinal)))
            .Select(r => r.Name)
            .ToList();
        Assert.Empty(offending);
    }

    [Fact]
    public void CoreProjectFile_HasNoForbiddenPackageReference()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Triage.sln")))
        {
            dir = dir.Parent;
        }
        Assert.NotNull(dir);
        var csproj = File.ReadAllText(Path.Combine(dir.FullName, "src", "Triage.Core", "Triage.Core.csproj"));
        foreach (var f in Forbidden)
        {
            Assert.DoesNotContain($"Include=\"{f}", csproj, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void CoreTypes_NeverTouchTheClockOrFileSystem()
    {
        // A check on IL would need a decompiler; the source is small enough to scan.
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Triage.sln")))
        {
            dir = dir.Parent;
        }
        var sources = Directory.GetFiles(Path.Combine(dir!.FullName, "src", "Triage.Core"), "*.cs", SearchOption.AllDirectories)
            .Where(p => !p.Contains($"{Path.DirectorySeparatorChar}obj{Path.DirectorySeparatorChar}", StringComparison.Ordinal));
        string[] banned = ["DateTime.Now", "DateTime.UtcNow", "DateTimeOffset.Now", "DateTimeOffset.UtcNow", "File.Read", "File.Write", "File.Open", "Directory.", "new Random()", "Console."];
        var hits = sources
            .SelectMany(p => File.ReadLines(p).Select((line, i) => (p, i, line)))
            .Where(x => !x.line.TrimStart().StartsWith("//", StringComparison.Ordinal) && !x.line.TrimStart().StartsWith("///", StringComparison.Ordinal))
            .Where(x => banned.Any(b => x.line.Contains(b, StringComparison.Ordinal)))
            .Select(x => $"{Path.GetFileName(x.p)}:{x.i + 1}: {x.line.Trim()}")
            .ToList();
        Assert.Empty(hits);
    }
}
