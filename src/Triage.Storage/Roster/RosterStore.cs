using Dapper;
using Npgsql;
using Triage.Core.Roster;

namespace Triage.Storage.Roster;

/// <summary>Filters for listing sites; null means "any".</summary>
public sealed record SiteFilter(SiteStatus? Status = null, string? Observatory = null, string? NameContains = null);

/// <summary>Filters for listing spectrographs; null means "any".</summary>
public sealed record SpectrographFilter(
    Guid? SiteId = null,
    SpectrographStatus? Status = null,
    double? MinResolvingPower = null,
    double? MaxResolvingPower = null);

/// <summary>Sites and spectrographs in PostgreSQL, with optimistic concurrency on a row version.</summary>
public sealed class RosterStore(NpgsqlDataSource dataSource)
{
    private const string SiteColumns = """
        id AS Id, name AS Name, latitude_deg AS LatitudeDeg, longitude_deg AS LongitudeDeg,
        elevation_m AS ElevationM, min_altitude_deg AS MinAltitudeDeg, sun_avoidance_deg AS SunAvoidanceDeg,
        moon_avoidance_deg AS MoonAvoidanceDeg, seeing_arcsec AS SeeingArcsec,
        dark_sky_mag_arcsec2 AS DarkSkyMagArcsec2, sky_reference_wavelength_angstrom AS SkyReferenceWavelengthAngstrom,
        extinction_mag_per_airmass AS ExtinctionMagPerAirmass, status AS Status, observatory AS Observatory,
        version AS Version, updated_at AS UpdatedAt
        """;

    private const string SpectrographColumns = """
        id AS Id, site_id AS SiteId, name AS Name, resolving_power AS ResolvingPower,
        reference_wavelength_angstrom AS ReferenceWavelengthAngstrom, min_wavelength_angstrom AS MinWavelengthAngstrom,
        max_wavelength_angstrom AS MaxWavelengthAngstrom, aperture_m AS ApertureM, central_obstruction AS CentralObstruction,
        throughput AS Throughput, read_noise_electrons AS ReadNoiseElectrons,
        dark_current_electrons_per_second AS DarkCurrentElectronsPerSecond,
        pixels_per_resolution_element AS PixelsPerResolutionElement, spatial_pixel_scale_arcsec AS SpatialPixelScaleArcsec,
        slit_width_arcsec AS SlitWidthArcsec, overhead_seconds AS OverheadSeconds, max_exposure_seconds AS MaxExposureSeconds,
        max_airmass AS MaxAirmass, cost_per_hour AS CostPerHour, nightly_budget_hours AS NightlyBudgetHours,
        status AS Status, version AS Version, updated_at AS UpdatedAt
        """;

    // ---- sites ----------------------------------------------------------------------------

    private const string InsertSiteSql = """
        INSERT INTO sites (id, name, latitude_deg, longitude_deg, elevation_m, min_altitude_deg, sun_avoidance_deg,
            moon_avoidance_deg, seeing_arcsec, dark_sky_mag_arcsec2, sky_reference_wavelength_angstrom,
            extinction_mag_per_airmass, status, observatory, version, created_at, updated_at)
        VALUES (@Id, @Name, @LatitudeDeg, @LongitudeDeg, @ElevationM, @MinAltitudeDeg, @SunAvoidanceDeg,
            @MoonAvoidanceDeg, @SeeingArcsec, @DarkSkyMagArcsec2, @SkyReferenceWavelengthAngstrom,
            @ExtinctionMagPerAirmass, @Status, @Observatory, 1, @Now, @Now)
        ON CONFLICT DO NOTHING
        """;

    /// <summary>Inserts a site; a clash on id or name is reported as <see cref="WriteOutcome.Conflict"/>.</summary>
    public async Task<WriteResult> InsertSiteAsync(Site site, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.ExecuteAsync(new CommandDefinition(InsertSiteSql, SiteParameters(site, now), cancellationToken: ct));
        return rows == 1 ? new WriteResult(WriteOutcome.Done, 1) : WriteResult.Clash($"A site named '{site.Name}' (or with id {site.Id}) exists already.");
    }

    private const string GetSiteSql = $"SELECT {SiteColumns} FROM sites WHERE id = @id";

    public async Task<Versioned<Site>?> GetSiteAsync(Guid id, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var row = await conn.QuerySingleOrDefaultAsync<SiteRow>(new CommandDefinition(GetSiteSql, new { id }, cancellationToken: ct));
        return row?.ToVersioned();
    }

    private const string ListSitesSql = $"""
        SELECT {SiteColumns} FROM sites
        WHERE (@status::text IS NULL OR status = @status)
          AND (@observatory::text IS NULL OR observatory = @observatory)
          AND (@name::text IS NULL OR name ILIKE '%' || @name || '%')
        ORDER BY name
        """;

    public async Task<IReadOnlyList<Versioned<Site>>> ListSitesAsync(SiteFilter filter, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<SiteRow>(new CommandDefinition(ListSitesSql, new
        {
            status = filter.Status is { } s ? StatusText(s) : null,
            observatory = filter.Observatory,
            name = filter.NameContains,
        }, cancellationToken: ct));
        return rows.Select(r => r.ToVersioned()).ToList();
    }

    private const string UpdateSiteSql = """
        UPDATE sites SET name = @Name, latitude_deg = @LatitudeDeg, longitude_deg = @LongitudeDeg, elevation_m = @ElevationM,
            min_altitude_deg = @MinAltitudeDeg, sun_avoidance_deg = @SunAvoidanceDeg, moon_avoidance_deg = @MoonAvoidanceDeg,
            seeing_arcsec = @SeeingArcsec, dark_sky_mag_arcsec2 = @DarkSkyMagArcsec2,
            sky_reference_wavelength_angstrom = @SkyReferenceWavelengthAngstrom,
            extinction_mag_per_airmass = @ExtinctionMagPerAirmass, status = @Status, observatory = @Observatory,
            version = version + 1, updated_at = @Now
        WHERE id = @Id AND version = @ExpectedVersion
          AND NOT EXISTS (SELECT 1 FROM sites o WHERE o.name = @Name AND o.id <> @Id)
        RETURNING version
        """;

    /// <summary>Replaces a site if its version is still <paramref name="expectedVersion"/>.</summary>
    public async Task<WriteResult> UpdateSiteAsync(Site site, int expectedVersion, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var p = SiteParameters(site, now);
        p.Add("ExpectedVersion", expectedVersion);
        var version = await conn.ExecuteScalarAsync<int?>(new CommandDefinition(UpdateSiteSql, p, cancellationToken: ct));
        if (version is { } v)
        {
            return new WriteResult(WriteOutcome.Done, v);
        }
        return await ExplainFailedSiteWriteAsync(conn, site.Id, expectedVersion, site.Name, ct);
    }

    private const string DeleteSiteSql = """
        DELETE FROM sites WHERE id = @id AND version = @expectedVersion
          AND NOT EXISTS (SELECT 1 FROM spectrographs s WHERE s.site_id = @id)
        """;

    /// <summary>Deletes a site that has no spectrographs, if its version is still <paramref name="expectedVersion"/>.</summary>
    public async Task<WriteResult> DeleteSiteAsync(Guid id, int expectedVersion, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.ExecuteAsync(new CommandDefinition(DeleteSiteSql, new { id, expectedVersion }, cancellationToken: ct));
        if (rows == 1)
        {
            return new WriteResult(WriteOutcome.Done);
        }
        var hasInstruments = await conn.ExecuteScalarAsync<bool>(new CommandDefinition(
            "SELECT EXISTS (SELECT 1 FROM spectrographs WHERE site_id = @id)", new { id }, cancellationToken: ct));
        return hasInstruments
            ? WriteResult.Clash("The site still has spectrographs; delete or move them first.")
            : await ExplainFailedSiteWriteAsync(conn, id, expectedVersion, null, ct);
    }

    private static async Task<WriteResult> ExplainFailedSiteWriteAsync(NpgsqlConnection conn, Guid id, int expectedVersion, string? name, CancellationToken ct)
    {
        var current = await conn.ExecuteScalarAsync<int?>(new CommandDefinition(
            "SELECT version FROM sites WHERE id = @id", new { id }, cancellationToken: ct));
        if (current is null)
        {
            return WriteResult.NotFound;
        }
        if (current != expectedVersion)
        {
            return WriteResult.Stale;
        }
        return WriteResult.Clash($"Another site is named '{name}'.");
    }

    private static DynamicParameters SiteParameters(Site s, DateTimeOffset now)
    {
        var p = new DynamicParameters(new
        {
            s.Id, s.Name, s.LatitudeDeg, s.LongitudeDeg, s.ElevationM, s.MinAltitudeDeg, s.SunAvoidanceDeg,
            s.MoonAvoidanceDeg, s.SeeingArcsec, s.DarkSkyMagArcsec2, s.SkyReferenceWavelengthAngstrom,
            s.ExtinctionMagPerAirmass, Status = StatusText(s.Status), s.Observatory, Now = now,
        });
        return p;
    }

    // ---- spectrographs ---------------------------------------------------------------------

    private const string InsertSpectrographSql = """
        INSERT INTO spectrographs (id, site_id, name, resolving_power, reference_wavelength_angstrom, min_wavelength_angstrom,
            max_wavelength_angstrom, aperture_m, central_obstruction, throughput, read_noise_electrons,
            dark_current_electrons_per_second, pixels_per_resolution_element, spatial_pixel_scale_arcsec, slit_width_arcsec,
            overhead_seconds, max_exposure_seconds, max_airmass, cost_per_hour, nightly_budget_hours, status, version,
            created_at, updated_at)
        SELECT @Id, @SiteId, @Name, @ResolvingPower, @ReferenceWavelengthAngstrom, @MinWavelengthAngstrom,
            @MaxWavelengthAngstrom, @ApertureM, @CentralObstruction, @Throughput, @ReadNoiseElectrons,
            @DarkCurrentElectronsPerSecond, @PixelsPerResolutionElement, @SpatialPixelScaleArcsec, @SlitWidthArcsec,
            @OverheadSeconds, @MaxExposureSeconds, @MaxAirmass, @CostPerHour, @NightlyBudgetHours, @Status, 1, @Now, @Now
        WHERE EXISTS (SELECT 1 FROM sites WHERE id = @SiteId)
        ON CONFLICT DO NOTHING
        """;

    /// <summary>Inserts a spectrograph on an existing site.</summary>
    public async Task<WriteResult> InsertSpectrographAsync(Spectrograph sp, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.ExecuteAsync(new CommandDefinition(InsertSpectrographSql, SpectrographParameters(sp, now), cancellationToken: ct));
        if (rows == 1)
        {
            return new WriteResult(WriteOutcome.Done, 1);
        }
        var siteExists = await conn.ExecuteScalarAsync<bool>(new CommandDefinition(
            "SELECT EXISTS (SELECT 1 FROM sites WHERE id = @SiteId)", new { sp.SiteId }, cancellationToken: ct));
        return siteExists
            ? WriteResult.Clash($"A spectrograph named '{sp.Name}' (or with id {sp.Id}) exists already at this site.")
            : WriteResult.NotFound;
    }

    private const string GetSpectrographSql = $"SELECT {SpectrographColumns} FROM spectrographs WHERE id = @id";

    public async Task<Versioned<Spectrograph>?> GetSpectrographAsync(Guid id, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var row = await conn.QuerySingleOrDefaultAsync<SpectrographRow>(new CommandDefinition(GetSpectrographSql, new { id }, cancellationToken: ct));
        return row?.ToVersioned();
    }

    private const string ListSpectrographsSql = $"""
        SELECT {SpectrographColumns} FROM spectrographs
        WHERE (@siteId::uuid IS NULL OR site_id = @siteId)
          AND (@status::text IS NULL OR status = @status)
          AND (@minR::float8 IS NULL OR resolving_power >= @minR)
          AND (@maxR::float8 IS NULL OR resolving_power <= @maxR)
        ORDER BY resolving_power, name
        """;

    public async Task<IReadOnlyList<Versioned<Spectrograph>>> ListSpectrographsAsync(SpectrographFilter filter, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<SpectrographRow>(new CommandDefinition(ListSpectrographsSql, new
        {
            siteId = filter.SiteId,
            status = filter.Status is { } s ? StatusText(s) : null,
            minR = filter.MinResolvingPower,
            maxR = filter.MaxResolvingPower,
        }, cancellationToken: ct));
        return rows.Select(r => r.ToVersioned()).ToList();
    }

    private const string UpdateSpectrographSql = """
        UPDATE spectrographs SET site_id = @SiteId, name = @Name, resolving_power = @ResolvingPower,
            reference_wavelength_angstrom = @ReferenceWavelengthAngstrom, min_wavelength_angstrom = @MinWavelengthAngstrom,
            max_wavelength_angstrom = @MaxWavelengthAngstrom, aperture_m = @ApertureM, central_obstruction = @CentralObstruction,
            throughput = @Throughput, read_noise_electrons = @ReadNoiseElectrons,
            dark_current_electrons_per_second = @DarkCurrentElectronsPerSecond,
            pixels_per_resolution_element = @PixelsPerResolutionElement, spatial_pixel_scale_arcsec = @SpatialPixelScaleArcsec,
            slit_width_arcsec = @SlitWidthArcsec, overhead_seconds = @OverheadSeconds, max_exposure_seconds = @MaxExposureSeconds,
            max_airmass = @MaxAirmass, cost_per_hour = @CostPerHour, nightly_budget_hours = @NightlyBudgetHours,
            status = @Status, version = version + 1, updated_at = @Now
        WHERE id = @Id AND version = @ExpectedVersion
          AND EXISTS (SELECT 1 FROM sites WHERE id = @SiteId)
          AND NOT EXISTS (SELECT 1 FROM spectrographs o WHERE o.site_id = @SiteId AND o.name = @Name AND o.id <> @Id)
        RETURNING version
        """;

    public async Task<WriteResult> UpdateSpectrographAsync(Spectrograph sp, int expectedVersion, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var p = SpectrographParameters(sp, now);
        p.Add("ExpectedVersion", expectedVersion);
        var version = await conn.ExecuteScalarAsync<int?>(new CommandDefinition(UpdateSpectrographSql, p, cancellationToken: ct));
        if (version is { } v)
        {
            return new WriteResult(WriteOutcome.Done, v);
        }
        var current = await conn.ExecuteScalarAsync<int?>(new CommandDefinition(
            "SELECT version FROM spectrographs WHERE id = @Id", new { sp.Id }, cancellationToken: ct));
        if (current is null)
        {
            return WriteResult.NotFound;
        }
        if (current != expectedVersion)
        {
            return WriteResult.Stale;
        }
        var siteExists = await conn.ExecuteScalarAsync<bool>(new CommandDefinition(
            "SELECT EXISTS (SELECT 1 FROM sites WHERE id = @SiteId)", new { sp.SiteId }, cancellationToken: ct));
        return WriteResult.Clash(siteExists
            ? $"Another spectrograph at this site is named '{sp.Name}'."
            : $"Site {sp.SiteId} does not exist.");
    }

    public async Task<WriteResult> DeleteSpectrographAsync(Guid id, int expectedVersion, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.ExecuteAsync(new CommandDefinition(
            "DELETE FROM spectrographs WHERE id = @id AND version = @expectedVersion", new { id, expectedVersion }, cancellationToken: ct));
        if (rows == 1)
        {
            return new WriteResult(WriteOutcome.Done);
        }
        var exists = await conn.ExecuteScalarAsync<bool>(new CommandDefinition(
            "SELECT EXISTS (SELECT 1 FROM spectrographs WHERE id = @id)", new { id }, cancellationToken: ct));
        return exists ? WriteResult.Stale : WriteResult.NotFound;
    }

    private static DynamicParameters SpectrographParameters(Spectrograph s, DateTimeOffset now) => new(new
    {
        s.Id, s.SiteId, s.Name, s.ResolvingPower, s.ReferenceWavelengthAngstrom, s.MinWavelengthAngstrom,
        s.MaxWavelengthAngstrom, s.ApertureM, s.CentralObstruction, s.Throughput, s.ReadNoiseElectrons,
        s.DarkCurrentElectronsPerSecond, s.PixelsPerResolutionElement, s.SpatialPixelScaleArcsec, s.SlitWidthArcsec,
        s.OverheadSeconds, s.MaxExposureSeconds, s.MaxAirmass, s.CostPerHour, s.NightlyBudgetHours,
        Status = StatusText(s.Status), Now = now,
    });

    internal static string StatusText(SiteStatus s) => s == SiteStatus.Open ? "open" : "closed";

    internal static string StatusText(SpectrographStatus s) => s == SpectrographStatus.Available ? "available" : "closed";

    private sealed record SiteRow(
        Guid Id, string Name, double LatitudeDeg, double LongitudeDeg, double ElevationM, double MinAltitudeDeg,
        double SunAvoidanceDeg, double MoonAvoidanceDeg, double SeeingArcsec, double DarkSkyMagArcsec2,
        double SkyReferenceWavelengthAngstrom, double ExtinctionMagPerAirmass, string Status, string? Observatory,
        int Version, DateTime UpdatedAt)
    {
        public Versioned<Site> ToVersioned() => new(
            new Site(Id, Name, LatitudeDeg, LongitudeDeg, ElevationM, MinAltitudeDeg, SunAvoidanceDeg, MoonAvoidanceDeg,
                SeeingArcsec, DarkSkyMagArcsec2, SkyReferenceWavelengthAngstrom, ExtinctionMagPerAirmass,
                Status == "open" ? SiteStatus.Open : SiteStatus.Closed, Observatory),
            Version, Utc.From(UpdatedAt));
    }

    private sealed record SpectrographRow(
        Guid Id, Guid SiteId, string Name, double ResolvingPower, double ReferenceWavelengthAngstrom,
        double MinWavelengthAngstrom, double MaxWavelengthAngstrom, double ApertureM, double CentralObstruction,
        double Throughput, double ReadNoiseElectrons, double DarkCurrentElectronsPerSecond,
        double PixelsPerResolutionElement, double SpatialPixelScaleArcsec, double SlitWidthArcsec,
        double OverheadSeconds, double MaxExposureSeconds, double MaxAirmass, double CostPerHour,
        double NightlyBudgetHours, string Status, int Version, DateTime UpdatedAt)
    {
        public Versioned<Spectrograph> ToVersioned() => new(
            new Spectrograph(Id, SiteId, Name, ResolvingPower, ReferenceWavelengthAngstrom, MinWavelengthAngstrom,
                MaxWavelengthAngstrom, ApertureM, CentralObstruction, Throughput, ReadNoiseElectrons,
                DarkCurrentElectronsPerSecond, PixelsPerResolutionElement, SpatialPixelScaleArcsec, SlitWidthArcsec,
                OverheadSeconds, MaxExposureSeconds, MaxAirmass, CostPerHour, NightlyBudgetHours,
                Status == "available" ? SpectrographStatus.Available : SpectrographStatus.Closed),
            Version, Utc.From(UpdatedAt));
    }
}
