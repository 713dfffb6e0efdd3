using System.Threading.Channels;

namespace Triage.Api.Tests.Infrastructure;

/// <summary>A minimal server-sent-event client for tests: each event as (id, event, data).</summary>
public static class ServerSentEvents
{
    /// <summary>Reads the stream at <paramref name="url"/> into <paramref name="writer"/> until cancelled or closed.</summary>
    public static async Task ReadAsync(HttpClient client, string url, ChannelWriter<(string Id, string Event, string Data)> writer, CancellationToken ct)
    {
        try
        {
            using var response = await client.GetAsync(url, HttpCompletionOption.ResponseHeadersRead, ct);
            Assert.Equal("text/event-stream", response.Content.Headers.ContentType?.MediaType);
            using var reader = new StreamReader(await response.Content.ReadAsStreamAsync(ct));
            string id = "", ev = "", data = "";
            while (await reader.ReadLineAsync(ct) is { } line)
            {
                if (line.Length == 0)
                {
                    if (data.Length > 0)
                    {
                        await writer.WriteAsync((id, ev, data), ct);
                    }
                    id = ev = data = "";
                }
                else if (line.StartsWith("id: ", StringComparison.Ordinal)) { id = line[4..]; }
                else if (line.StartsWith("event: ", StringComparison.Ordinal)) { ev = line[7..]; }
                else if (line.StartsWith("data: ", StringComparison.Ordinal)) { data += line[6..]; }
            }
        }
        catch (OperationCanceledException)
        {
        }
    }

    /// <summary>The first item that matches, or an <see cref="OperationCanceledException"/> after <paramref name="timeout"/>.</summary>
    public static async Task<T> ReadUntilAsync<T>(ChannelReader<T> reader, Func<T, bool> match, TimeSpan timeout)
    {
        using var cts = new CancellationTokenSource(timeout);
        while (true)
        {
            var item = await reader.ReadAsync(cts.Token);
            if (match(item))
            {
                return item;
            }
        }
    }
}
