using System.CommandLine;
using Triage.Cli.Verbs;

var root = new RootCommand("triage: spectroscopic follow-up planning for transient candidates");
Command[] verbs =
[
    LibraryVerb.Create(),
    DegradeVerb.Create(),
    CalibrateVerb.Create(),
    PlotVerb.Create(),
];
foreach (var verb in verbs) root.Subcommands.Add(verb);
return root.Parse(args).Invoke();
