using System.Net;
using System.Text.Json;

namespace Triage.Api.Tests.Infrastructure;

/// <summary>Background jobs seen from a client.</summary>
public static class JobPolling
{
    /// <summary>Follows an accepted job (202 with a job URL) until it succeeds and returns its result; fails the test on a failed job.</summary>
    public static async Task<JsonElement> RunToEndAsync(HttpClient client, HttpResponseMessage accepted, int polls)
    {
        Assert.Equal(HttpStatusCode.Accepted, accepted.StatusCode);
        var jobUrl = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString();
        for (var i = 0; i < polls; i++)
        {
            var job = JsonDocument.Parse(await client.GetStringAsync(jobUrl)).RootElement;
            var status = job.GetProperty("status").GetString();
            if (status == "succeeded")
            {
                return job.GetProperty("result");
            }
            Assert.True(status != "failed", job.GetProperty("error").GetString());
            await Task.Delay(200);
        }
        throw new TimeoutException("the job did not finish");
    }
}
