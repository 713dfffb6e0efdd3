namespace Triage.Core.Sky;

/// <summary>Small angle helpers shared by the sky computations (degrees at the edges, radians inside).</summary>
internal static class Angles
{
    public const double DegToRad = Math.PI / 180.0;
    public const double RadToDeg = 180.0 / Math.PI;
    public const double ArcsecToRad = Math.PI / (180.0 * 3600.0);

    /// <summary>Reduces an angle in degrees to [0, 360).</summary>
    public static double Normalize360(double deg)
    {
        double r = deg % 360.0;
        return r < 0 ? r + 360.0 : r;
    }

    /// <summary>Reduces an angle in degrees to [−180, 180).</summary>
    public static double Normalize180(double deg) => Normalize360(deg + 180.0) - 180.0;

    public static double SinDeg(double deg) => Math.Sin(deg * DegToRad);

    public static double CosDeg(double deg) => Math.Cos(deg * DegToRad);
}

/// <summary>A Cartesian 3-vector (unit vectors of directions, or positions in km).</summary>
internal readonly record struct Vec3(double X, double Y, double Z)
{
    public static Vec3 FromSpherical(double lonRad, double latRad)
    {
        double c = Math.Cos(latRad);
        return new Vec3(c * Math.Cos(lonRad), c * Math.Sin(lonRad), Math.Sin(latRad));
    }

    public double Length => Math.Sqrt(X * X + Y * Y + Z * Z);

    public Vec3 Normalized()
    {
        double l = Length;
        return new Vec3(X / l, Y / l, Z / l);
    }

    public double Dot(Vec3 o) => X * o.X + Y * o.Y + Z * o.Z;

    public static Vec3 operator +(Vec3 a, Vec3 b) => new(a.X + b.X, a.Y + b.Y, a.Z + b.Z);

    public static Vec3 operator -(Vec3 a, Vec3 b) => new(a.X - b.X, a.Y - b.Y, a.Z - b.Z);

    public static Vec3 operator *(double s, Vec3 a) => new(s * a.X, s * a.Y, s * a.Z);

    /// <summary>Longitude (right ascension) in radians, [0, 2π).</summary>
    public double LonRad
    {
        get
        {
            double l = Math.Atan2(Y, X);
            return l < 0 ? l + 2 * Math.PI : l;
        }
    }

    /// <summary>Latitude (declination) in radians.</summary>
    public double LatRad => Math.Atan2(Z, Math.Sqrt(X * X + Y * Y));

    /// <summary>Angle between two directions in degrees, accurate at all separations.</summary>
    public static double AngleDeg(Vec3 a, Vec3 b)
    {
        var c = new Vec3(a.Y * b.Z - a.Z * b.Y, a.Z * b.X - a.X * b.Z, a.X * b.Y - a.Y * b.X);
        return Math.Atan2(c.Length, a.Dot(b)) * Angles.RadToDeg;
    }
}

/// <summary>A 3×3 rotation matrix, row-major.</summary>
internal readonly record struct Mat3(
    double M00, double M01, double M02,
    double M10, double M11, double M12,
    double M20, double M21, double M22)
{
    public static Mat3 Identity => new(1, 0, 0, 0, 1, 0, 0, 0, 1);

    /// <summary>Passive rotation about x by <paramref name="a"/> radians.</summary>
    public static Mat3 R1(double a)
    {
        double c = Math.Cos(a), s = Math.Sin(a);
        return new Mat3(1, 0, 0, 0, c, s, 0, -s, c);
    }

    /// <summary>Passive rotation about y by <paramref name="a"/> radians.</summary>
    public static Mat3 R2(double a)
    {
        double c = Math.Cos(a), s = Math.Sin(a);
        return new Mat3(c, 0, -s, 0, 1, 0, s, 0, c);
    }

    /// <summary>Passive rotation about z by <paramref name="a"/> radians.</summary>
    public static Mat3 R3(double a)
    {
        double c = Math.Cos(a), s = Math.Sin(a);
        return new Mat3(c, s, 0, -s, c, 0, 0, 0, 1);
    }

    public static Mat3 operator *(Mat3 a, Mat3 b) => new(
        a.M00 * b.M00 + a.M01 * b.M10 + a.M02 * b.M20,
        a.M00 * b.M01 + a.M01 * b.M11 + a.M02 * b.M21,
        a.M00 * b.M02 + a.M01 * b.M12 + a.M02 * b.M22,
        a.M10 * b.M00 + a.M11 * b.M10 + a.M12 * b.M20,
        a.M10 * b.M01 + a.M11 * b.M11 + a.M12 * b.M21,
        a.M10 * b.M02 + a.M11 * b.M12 + a.M12 * b.M22,
        a.M20 * b.M00 + a.M21 * b.M10 + a.M22 * b.M20,
        a.M20 * b.M01 + a.M21 * b.M11 + a.M22 * b.M21,
        a.M20 * b.M02 + a.M21 * b.M12 + a.M22 * b.M22);

    public static Vec3 operator *(Mat3 m, Vec3 v) => new(
        m.M00 * v.X + m.M01 * v.Y + m.M02 * v.Z,
        m.M10 * v.X + m.M11 * v.Y + m.M12 * v.Z,
        m.M20 * v.X + m.M21 * v.Y + m.M22 * v.Z);
}
