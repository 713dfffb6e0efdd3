using System.CommandLine;
using Triage.Cli.Verbs;

var root = new RootCommand("Triage: plan tonight's spectroscopic follow-up of transient candidates.");
Command[] verbs =
[
    LibraryVerb.Create(),
    DegradeVerb.Create(),
    CalibrateVerb.Create(),
    PlotVerb.Create(),
    FitVerb.Create(),
    InventCandidatesVerb.Create(),
    PlanVerb.Create(),
];
foreach (var verb in verbs) root.Subcommands.Add(verb);
return root.Parse(args).Invoke();
