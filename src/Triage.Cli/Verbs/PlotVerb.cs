using System.CommandLine;
using System.Text.Json;
using Triage.Learning;

namespace Triage.Cli.Verbs;

/// <summary><c>triage plot-calibration</c>: draw the SVG plots of an existing calibration JSON.</summary>
internal static class PlotVerb
{
    public static Command Create()
    {
        var input = new Option<FileInfo>("--in") { Description = "Calibration JSON written by 'calibrate'.", Required = true };
        var output = new Option<DirectoryInfo>("--out") { Description = "Folder for the SVG files.", Required = true };
        var cmd = new Command("plot-calibration", "Draw recall-versus-R curves and confusion heatmaps (SVG) from a calibration JSON.") { input, output };
        cmd.SetAction(parse =>
        {
            var file = parse.GetValue(input)!;
            if (!file.Exists) { Console.Error.WriteLine($"--in: '{file.FullName}' does not exist."); return 2; }
            try
            {
                var doc = CalibrationJson.Deserialize(File.ReadAllText(file.FullName));
                CalibrateVerb.WritePlots(doc, parse.GetValue(output)!.FullName);
                return 0;
            }
            catch (JsonException ex)
            {
                Console.Error.WriteLine($"--in: not a calibration JSON ({ex.Message}).");
                return 1;
            }
        });
        return cmd;
    }
}
