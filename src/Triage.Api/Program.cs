using Triage.Api.Access;
using Triage.Api.Calibrations;
using Triage.Api.Candidates;
using Triage.Api.Errors;
using Triage.Api.Events;
using Triage.Api.Identification;
using Triage.Api.Jobs;
using Triage.Api.NightOperations;
using Triage.Api.Operations;
using Triage.Api.Plans;
using Triage.Api.Roster;
using Triage.Api.Seasons;
using Triage.Api.Sky;

var builder = WebApplication.CreateBuilder(args);
builder.AddTriageLogging();
builder.Services.AddSingleton(TimeProvider.System);
builder.Services.AddTriageJson();
builder.Services.AddTriageProblems();
builder.AddHttpHardening();
builder.Services.AddTriageOpenApi();
builder.Services.AddDatabase(builder.Configuration);
builder.Services.AddAccess(builder.Configuration);
builder.Services.AddRoster();
builder.Services.AddCandidates(builder.Configuration);
builder.Services.AddJobs(builder.Configuration);
builder.Services.AddPlans();
builder.Services.AddNightOperations(builder.Configuration);
builder.Services.AddPlanEvents(builder.Configuration);
builder.Services.AddCalibrations();
builder.Services.AddSeasons();
builder.Services.AddSky();
builder.Services.AddTriageCompression();
builder.Services.AddDatabaseNotifications(builder.Configuration);

var app = builder.Build();
// Outermost, so that the logged status is the one the exception handler actually sent.
app.UseTriageRequestLogging();
app.UseTriageProblems();
app.UseHttpHardening();
app.UseDefaultFiles();
app.UseStaticFiles();
app.UseRouting();
app.UseFailedAuthenticationLimit();
app.UseAuthentication();
app.UseRateLimiter();
app.UseAuthorization();
app.UseMiddleware<BodySizeLimitMiddleware>();
app.UseTriageCompression();

app.MapOperations();
app.MapKeys();
app.MapRoster();
app.MapCandidates();
app.MapUnitAccuracy();
app.MapJobs();
app.MapPlans();
app.MapNightOperations();
app.MapPlanEvents();
app.MapCalibrations();
app.MapSeasons();
app.MapSky();

await app.PrepareDatabaseAsync();
await app.RunAsync();

/// <summary>Entry point, visible to the integration tests' host factory.</summary>
public partial class Program;
