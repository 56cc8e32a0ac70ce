using System.Globalization;
using System.Security.Cryptography;
using System.Text;

namespace HumWatch.Host.Web;

/// <summary>
/// Password hashes of the form "pbkdf2-sha256:ITERATIONS:SALT:HASH": PBKDF2 with HMAC-SHA256 (RFC 8018), base64 salt
/// and a 32-byte base64 hash. Only the hash is kept in settings; checks compare in constant time.
/// </summary>
public static class PasswordCheck
{
    /// <summary>Fewest iterations accepted.</summary>
    public const int MinIterations = 100_000;

    /// <summary>Iterations of a new hash.</summary>
    public const int DefaultIterations = 210_000;

    private const string Scheme = "pbkdf2-sha256";
    private const int HashBytes = 32;
    private const int SaltBytes = 16;

    /// <summary>A new hash of <paramref name="password"/> with a random salt.</summary>
    public static string Hash(string password, int iterations = DefaultIterations)
    {
        ArgumentException.ThrowIfNullOrEmpty(password);
        ArgumentOutOfRangeException.ThrowIfLessThan(iterations, MinIterations);
        var salt = RandomNumberGenerator.GetBytes(SaltBytes);
        var hash = Rfc2898DeriveBytes.Pbkdf2(Encoding.UTF8.GetBytes(password), salt, iterations, HashAlgorithmName.SHA256, HashBytes);
        return string.Create(CultureInfo.InvariantCulture, $"{Scheme}:{iterations}:{Convert.ToBase64String(salt)}:{Convert.ToBase64String(hash)}");
    }

    /// <summary>Whether <paramref name="password"/> matches <paramref name="encoded"/>; false for a malformed hash.</summary>
    public static bool Verify(string password, string encoded)
    {
        ArgumentNullException.ThrowIfNull(password);
        if (!TryParse(encoded, out var parts))
        {
            return false;
        }

        var actual = Rfc2898DeriveBytes.Pbkdf2(Encoding.UTF8.GetBytes(password), parts.Salt, parts.Iterations, HashAlgorithmName.SHA256, HashBytes);
        return CryptographicOperations.FixedTimeEquals(actual, parts.Hash);
    }

    internal static bool TryParse(string? encoded, out (int Iterations, byte[] Salt, byte[] Hash) parts)
    {
        parts = default;
        var fields = encoded?.Split(':');
        if (fields is not { Length: 4 } || fields[0] != Scheme
            || !int.TryParse(fields[1], NumberStyles.None, CultureInfo.InvariantCulture, out var iterations) || iterations < MinIterations)
        {
            return false;
        }

        try
        {
            var salt = Convert.FromBase64String(fields[2]);
            var hash = Convert.FromBase64String(fields[3]);
            if (salt.Length < SaltBytes || hash.Length != HashBytes)
            {
                return false;
            }

            parts = (iterations, salt, hash);
            return true;
        }
        catch (FormatException)
        {
            return false;
        }
    }
}
