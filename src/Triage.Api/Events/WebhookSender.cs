using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using Microsoft.Extensions.Options;
using Triage.Storage.Events;

namespace Triage.Api.Events;

/// <summary>
/// Sends one webhook delivery: POST of the event JSON with the headers <c>Triage-Event-Id</c>, <c>Triage-Timestamp</c>
/// (ISO 8601 UTC) and <c>Triage-Signature: hmac-sha256=&lt;hex&gt;</c>, the HMAC-SHA256 (RFC 2104) under the subscription's
/// secret of <c>{event id}.{timestamp}.{body}</c>. A 2xx answer delivers; anything else is retried after
/// base · 2^(attempt−1), capped, until the attempts run out.
/// </summary>
public sealed class WebhookSender(IHttpClientFactory clients, TimeProvider clock, IOptions<PlanEventOptions> options)
{
    /// <summary>Name of the signature header.</summary>
    public const string SignatureHeader = "Triage-Signature";

    /// <summary>Name of the timestamp header.</summary>
    public const string TimestampHeader = "Triage-Timestamp";

    /// <summary>Name of the event id header.</summary>
    public const string EventIdHeader = "Triage-Event-Id";

    /// <summary>The signature header's value for a delivery.</summary>
    public static string Sign(string secret, long eventId, string timestamp, string body)
    {
        var mac = HMACSHA256.HashData(Encoding.UTF8.GetBytes(secret), Encoding.UTF8.GetBytes(string.Create(CultureInfo.InvariantCulture, $"{eventId}.{timestamp}.{body}")));
        return "hmac-sha256=" + Convert.ToHexStringLower(mac);
    }

    /// <summary>Delivers one event; never throws for a failed delivery.</summary>
    public async Task<DeliveryAttempt> SendAsync(DueDelivery delivery)
    {
        var o = options.Value;
        var body = PlanEventBody.ToJson(PlanEventBody.Deserialize(delivery.EventId, delivery.BodyJson));
        var timestamp = clock.GetUtcNow().UtcDateTime.ToString("yyyy-MM-ddTHH:mm:ssZ", CultureInfo.InvariantCulture);
        using var request = new HttpRequestMessage(HttpMethod.Post, delivery.Url)
        {
            Content = new StringContent(body, Encoding.UTF8, "application/json"),
        };
        request.Headers.Add(EventIdHeader, delivery.EventId.ToString(CultureInfo.InvariantCulture));
        request.Headers.Add(TimestampHeader, timestamp);
        request.Headers.Add(SignatureHeader, Sign(delivery.Secret, delivery.EventId, timestamp, body));
        int? code = null;
        string? error;
        try
        {
            using var timeout = new CancellationTokenSource(o.DeliveryTimeout);
            using var response = await clients.CreateClient("webhooks").SendAsync(request, timeout.Token);
            code = (int)response.StatusCode;
            if (response.IsSuccessStatusCode)
            {
                return new DeliveryAttempt(true, code, null, null);
            }

            error = $"HTTP {code}";
        }
        catch (Exception e) when (e is HttpRequestException or TaskCanceledException or InvalidOperationException)
        {
            error = e.Message;
        }

        var attempt = delivery.Attempts + 1;
        if (attempt >= o.MaxAttempts)
        {
            return new DeliveryAttempt(false, code, error, null);
        }

        var delay = TimeSpan.FromTicks(Math.Min(o.RetryCap.Ticks, o.RetryBase.Ticks * (1L << Math.Min(30, attempt - 1))));
        return new DeliveryAttempt(false, code, error, clock.GetUtcNow() + delay);
    }
}
