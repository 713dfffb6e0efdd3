using System.CommandLine;
using System.Globalization;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;
using Triage.Learning;

namespace Triage.Cli.Verbs;

/// <summary><c>triage library export</c>: reads a library (text or FITS) and writes it as FITS or as plain text.</summary>
internal static class LibraryExportVerb
{
    public static Command Create()
    {
        var dir = new Option<DirectoryInfo>("--library") { Description = "Library folder with manifest.csv.", Required = true };
        var outDir = new Option<DirectoryInfo>("--out") { Description = "Folder to write the exported manifest.csv and spectra into.", Required = true };
        var format = new Option<string>("--format") { Description = "fits or text.", Required = true };
        format.AcceptOnlyFromAmong("fits", "text");
        var taxonomy = new Option<FileInfo?>("--taxonomy") { Description = "Taxonomy file (default: the built-in one)." };
        var cmd = new Command("export",
            "Write a library as FITS binary tables or plain text: vacuum wavelength (Å), flux and error exactly as Triage read them.")
            { dir, outDir, format, taxonomy };
        cmd.SetAction(parse =>
        {
            string source = parse.GetValue(dir)!.FullName, target = parse.GetValue(outDir)!.FullName;
            if (Path.GetFullPath(source).TrimEnd('/') == Path.GetFullPath(target).TrimEnd('/'))
            {
                Console.Error.WriteLine("--out: must differ from --library.");
                return 2;
            }
            SpectralLibrary lib;
            try
            {
                lib = LibraryFiles.Load(source, LibraryFiles.LoadTaxonomy(parse.GetValue(taxonomy)?.FullName));
            }
            catch (LibraryImportException ex)
            {
                foreach (var e in ex.Errors) Console.Error.WriteLine(e);
                Console.Error.WriteLine($"Not exported: {ex.Errors.Count} problem(s).");
                return 1;
            }
            foreach (var w in lib.Warnings) Console.Error.WriteLine($"warning: {w}");
            var fmt = parse.GetValue(format) == "fits" ? LibraryFormat.Fits : LibraryFormat.Text;
            try
            {
                // The folder name stays out: a comment containing "synthetic" marks a library as synthetic.
                var comments = new List<string> { "exported by triage library export" };
                if (lib.Synthetic) comments.Insert(0, SyntheticLibrary.Label);
                LibraryFiles.Export(lib, target, fmt, comments);
            }
            catch (ArgumentException ex)
            {
                Console.Error.WriteLine(ex.Message);
                return 1;
            }
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"Wrote {lib.Spectra.Count} spectra of {lib.ObjectCount} objects as {parse.GetValue(format)} to {target}, fingerprint {lib.Fingerprint()}"));
            return 0;
        });
        return cmd;
    }
}
