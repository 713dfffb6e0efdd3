using Triage.Api.Access;
using Triage.Api.Errors;
using Triage.Api.Jobs;
using Triage.Api.Operations;
using Triage.Api.Roster;

var builder = WebApplication.CreateBuilder(args);
builder.AddTriageLogging();
builder.Services.AddSingleton(TimeProvider.System);
builder.Services.AddTriageJson();
builder.Services.AddTriageProblems();
builder.Services.AddOpenApi();
builder.Services.AddDatabase(builder.Configuration);
builder.Services.AddAccess(builder.Configuration);
builder.Services.AddRoster();
builder.Services.AddJobs(builder.Configuration);

var app = builder.Build();
app.UseTriageProblems();
app.UseDefaultFiles();
app.UseStaticFiles();
app.UseRouting();
app.UseTriageRequestLogging();
app.UseAuthentication();
app.UseRateLimiter();
app.UseAuthorization();
app.UseMiddleware<BodySizeLimitMiddleware>();

app.MapOperations();
app.MapKeys();
app.MapRoster();
app.MapJobs();

await app.PrepareDatabaseAsync();
await app.RunAsync();

/// <summary>Entry point, visible to the integration tests' host factory.</summary>
public partial class Program;
