using System.CommandLine;
using Triage.Cli.Verbs;

var root = new RootCommand("triage: plan tonight's spectroscopic follow-up of transient candidates.");
Command[] verbs =
[
    DatabaseVerb.Create(),
    KeyVerb.Create(),
    DemoVerb.Create(),
    FitVerb.Create(),
    InventCandidatesVerb.Create(),
    PlanVerb.Create(),
    RehearseVerb.Create(),
    SkyVerb.Create(),
    ExptimeVerb.Create(),
    LibraryVerb.Create(),
    DegradeVerb.Create(),
    CalibrateVerb.Create(),
    PlotVerb.Create(),
    SimulateVerb.Create(),
];
foreach (var verb in verbs)
{
    root.Subcommands.Add(verb);
}
var parse = root.Parse(args);
// Usage errors exit 2 with the offending option named and no help dump (help stays on --help).
return parse.Errors.Count > 0 ? VerbParsing.ReportUsageErrors(parse, Console.Error) : await parse.InvokeAsync();
