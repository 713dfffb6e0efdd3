using System.CommandLine;
using Triage.Cli.Verbs;

// The verb registry: one line per verb, each verb in its own file under Verbs/.
var root = new RootCommand("triage: plan tonight's spectroscopic follow-up from files.");
root.Subcommands.Add(SkyVerb.Create());
root.Subcommands.Add(ExptimeVerb.Create());
return root.Parse(args).Invoke();
