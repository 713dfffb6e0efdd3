using System.CommandLine;
using Triage.Cli.Verbs;

var root = new RootCommand("Triage: plan tonight's spectroscopic follow-up of transient candidates.");
root.Subcommands.Add(FitVerb.Create());
root.Subcommands.Add(InventCandidatesVerb.Create());
root.Subcommands.Add(PlanVerb.Create());
return root.Parse(args).Invoke();
