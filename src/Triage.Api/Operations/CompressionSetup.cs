using System.IO.Compression;
using Microsoft.AspNetCore.ResponseCompression;

namespace Triage.Api.Operations;

/// <summary>
/// Brotli or gzip (as the client's Accept-Encoding asks) for the large JSON and CSV reads: plans,
/// candidates and calibrations. Key routes are never compressed (their answers carry secrets, and
/// compressing a secret beside reflected input leaks it), nor is an event stream (it must flush per event).
/// </summary>
public static class CompressionSetup
{
    private static readonly string[] Compressed = ["/api/plans", "/api/candidates", "/api/calibrations"];

    public static IServiceCollection AddTriageCompression(this IServiceCollection services)
    {
        services.AddResponseCompression(o =>
        {
            o.EnableForHttps = true;
            o.Providers.Add<BrotliCompressionProvider>();
            o.Providers.Add<GzipCompressionProvider>();
            o.MimeTypes = ["application/json", "text/csv"];
        });
        // Fastest levels: a large plan compresses about tenfold either way, and the CPU is better spent planning.
        services.Configure<BrotliCompressionProviderOptions>(o => o.Level = CompressionLevel.Fastest);
        services.Configure<GzipCompressionProviderOptions>(o => o.Level = CompressionLevel.Fastest);
        return services;
    }

    public static IApplicationBuilder UseTriageCompression(this IApplicationBuilder app) =>
        app.UseWhen(c => Compressed.Any(p => c.Request.Path.StartsWithSegments(p, StringComparison.OrdinalIgnoreCase)),
            b => b.UseResponseCompression());
}
