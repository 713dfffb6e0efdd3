using System.Collections.Concurrent;
using System.Net;
using System.Net.Sockets;

namespace Triage.Api.Tests.Faults;

/// <summary>
/// A TCP relay between the service and PostgreSQL that a test can cut: <see cref="Cut"/> drops
/// every open connection and refuses new ones (the database "goes away" mid-query without
/// touching the shared cluster), <see cref="Restore"/> lets connections through again.
/// </summary>
public sealed class TcpProxy : IAsyncDisposable
{
    private readonly TcpListener _listener = new(IPAddress.Loopback, 0);
    private readonly string _targetHost;
    private readonly int _targetPort;
    private readonly CancellationTokenSource _stop = new();
    private readonly ConcurrentDictionary<Socket, byte> _open = new();
    private readonly Task _accepting;
    private volatile bool _down;

    public TcpProxy(string targetHost, int targetPort)
    {
        _targetHost = targetHost;
        _targetPort = targetPort;
        _listener.Start();
        _accepting = Task.Run(AcceptLoopAsync);
    }

    public int Port => ((IPEndPoint)_listener.LocalEndpoint).Port;

    /// <summary>Connections relayed since the start (for a test to see the service really went through).</summary>
    public int Accepted => _accepted;

    private int _accepted;

    /// <summary>Drops every open connection at once and refuses new ones until <see cref="Restore"/>.</summary>
    public void Cut()
    {
        _down = true;
        foreach (var s in _open.Keys)
        {
            Close(s);
        }
    }

    public void Restore() => _down = false;

    /// <summary>A connection string like <paramref name="connectionString"/> but through this relay.</summary>
    public string Through(string connectionString) =>
        new Npgsql.NpgsqlConnectionStringBuilder(connectionString) { Host = "127.0.0.1", Port = Port }.ConnectionString;

    private async Task AcceptLoopAsync()
    {
        while (!_stop.IsCancellationRequested)
        {
            Socket client;
            try
            {
                client = await _listener.AcceptSocketAsync(_stop.Token);
            }
            catch (Exception) when (_stop.IsCancellationRequested)
            {
                return;
            }
            if (_down)
            {
                Close(client);
                continue;
            }
            Interlocked.Increment(ref _accepted);
            _ = Task.Run(() => RelayAsync(client));
        }
    }

    private async Task RelayAsync(Socket client)
    {
        var server = new Socket(AddressFamily.InterNetwork, SocketType.Stream, ProtocolType.Tcp);
        try
        {
            await server.ConnectAsync(_targetHost, _targetPort, _stop.Token);
        }
        catch (Exception)
        {
            Close(client);
            Close(server);
            return;
        }
        _open[client] = 0;
        _open[server] = 0;
        if (_down)
        {
            Close(client);
            Close(server);
            return;
        }
        await Task.WhenAny(PumpAsync(client, server), PumpAsync(server, client));
        Close(client);
        Close(server);
    }

    private async Task PumpAsync(Socket from, Socket to)
    {
        var buffer = new byte[16 * 1024];
        try
        {
            while (true)
            {
                var n = await from.ReceiveAsync(buffer, SocketFlags.None, _stop.Token);
                if (n == 0)
                {
                    return;
                }
                await to.SendAsync(buffer.AsMemory(0, n), SocketFlags.None, _stop.Token);
            }
        }
        catch (Exception)
        {
            // a cut or a closed peer ends the relay
        }
    }

    private void Close(Socket s)
    {
        _open.TryRemove(s, out _);
        try
        {
            s.LingerState = new LingerOption(true, 0); // reset, as a vanished server would look
            s.Close();
        }
        catch (Exception)
        {
            // already closed
        }
    }

    private int _disposed;

    public async ValueTask DisposeAsync()
    {
        if (Interlocked.Exchange(ref _disposed, 1) == 1)
        {
            return;
        }
        await _stop.CancelAsync();
        _listener.Stop();
        Cut();
        try
        {
            await _accepting;
        }
        catch (Exception)
        {
            // stopping
        }
    }
}
