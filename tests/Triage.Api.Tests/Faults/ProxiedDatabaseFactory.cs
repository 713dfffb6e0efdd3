using Microsoft.AspNetCore.Hosting;
using Npgsql;
using Triage.Api.Tests.Infrastructure;

namespace Triage.Api.Tests.Faults;

/// <summary>
/// A host on a database of its own whose every connection runs through a <see cref="TcpProxy"/>
/// the test can cut: the database vanishes mid-query for the service while the shared cluster
/// keeps running. Jobs poll quickly and beat every second, so a cut lands inside a job.
/// </summary>
public class ProxiedDatabaseFactory : IsolatedDatabaseFactory
{
    private readonly Lazy<TcpProxy> _proxy;

    public ProxiedDatabaseFactory()
    {
        _proxy = new Lazy<TcpProxy>(() =>
        {
            var target = new NpgsqlConnectionStringBuilder(ConnectionString);
            return new TcpProxy(target.Host ?? "127.0.0.1", target.Port);
        });
    }

    public TcpProxy Proxy => _proxy.Value;

    /// <summary>A direct data source on the same database, beside the proxy (for a test's own reads).</summary>
    public NpgsqlDataSource Direct => _direct ??= NpgsqlDataSource.Create(IsolatedConnectionString);

    private NpgsqlDataSource? _direct;

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.UseSetting("ConnectionStrings:Triage", Proxy.Through(IsolatedConnectionString));
        builder.UseSetting("Triage:Jobs:HeartbeatInterval", "00:00:01");
        builder.UseSetting("Triage:Jobs:PollInterval", "00:00:00.100");
        builder.UseSetting("Triage:Candidates:FitInBackground", "false");
    }

    protected override void Dispose(bool disposing)
    {
        if (disposing)
        {
            _direct?.Dispose();
        }
        base.Dispose(disposing);
        if (disposing && _proxy.IsValueCreated)
        {
            _proxy.Value.DisposeAsync().AsTask().GetAwaiter().GetResult();
        }
    }
}
