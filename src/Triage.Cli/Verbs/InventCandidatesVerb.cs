using System.CommandLine;
using System.Text.Json;
using Triage.Core.Candidates;

namespace Triage.Cli.Verbs;

/// <summary><c>invent-candidates --out FILE [--seed N] [--count N] [--night YYYY-MM-DD]</c>: writes an invented demo batch.</summary>
internal static class InventCandidatesVerb
{
    public static Command Create()
    {
        var output = new Option<FileInfo>("--out") { Description = "Where to write the batch JSON.", Required = true };
        var seed = new Option<int>("--seed") { Description = "Generator seed.", DefaultValueFactory = _ => new DemoNightOptions().Seed };
        var count = new Option<int>("--count") { Description = "Number of candidates.", DefaultValueFactory = _ => 500 };
        var night = new Option<DateOnly>("--night") { Description = "Night (UTC date); photometry ends at its 00:00 UTC.", DefaultValueFactory = _ => new DateOnly(2026, 12, 3) };
        var command = new Command("invent-candidates", "Write an invented, seeded night of broker candidates (demo data).") { output, seed, count, night };
        command.SetAction(parse =>
        {
            int n = parse.GetValue(count);
            if (n is < 1 or > 100_000)
            {
                Console.Error.WriteLine("--count must be between 1 and 100000.");
                return 2;
            }
            var options = new DemoNightOptions
            {
                Seed = parse.GetValue(seed),
                Count = n,
                NightStartUtc = new DateTimeOffset(parse.GetValue(night).ToDateTime(TimeOnly.MinValue), TimeSpan.Zero),
            };
            var batch = DemoNightGenerator.Generate(DefaultSubtypeLabels.All, options);
            var file = parse.GetValue(output)!;
            File.WriteAllText(file.FullName, JsonSerializer.Serialize(batch, new JsonSerializerOptions(BrokerBatchJson.Options) { WriteIndented = true }));
            Console.Error.WriteLine($"Wrote {n} invented candidates to {file.FullName}");
            return 0;
        });
        return command;
    }
}
