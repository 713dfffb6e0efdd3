namespace Triage.Bench.Harness;

/// <summary>The value after a `--name` among a harness command's arguments.</summary>
internal static class HarnessArgs
{
    /// <summary>The argument after <paramref name="name"/>, or <paramref name="fallback"/> when it is absent.</summary>
    public static string Value(string[] args, string name, string fallback) =>
        Array.IndexOf(args, name) is var i and >= 0 && i + 1 < args.Length ? args[i + 1] : fallback;
}
