using HumWatch.Host.Security;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>`humwatch keys new FILE`: a CURVE key pair file the ingest endpoint's loader reads back.</summary>
public sealed class KeysCommandTests : IDisposable
{
    private readonly TempFolder _work = new();

    public void Dispose() => _work.Dispose();

    [Fact]
    public async Task A_new_key_file_round_trips_through_the_key_loader_and_is_readable_by_its_owner_only()
    {
        var path = Path.Combine(_work.Path, "ingest-server.key");

        var (code, output, error) = await CliRunner.RunAsync("keys", "new", path);

        Assert.True(code == 0, error);
        var pair = CurveKeyFile.ReadKeyPair(path);
        Assert.Equal(pair.PublicKeyZ85, CurveKeyFile.ReadPublicKey(path));
        Assert.Contains(pair.PublicKeyZ85, output, StringComparison.Ordinal);
        Assert.Equal((byte)'{', File.ReadAllBytes(path)[0]);
        if (!OperatingSystem.IsWindows())
        {
            Assert.Equal(UnixFileMode.UserRead | UnixFileMode.UserWrite, File.GetUnixFileMode(path));
        }
    }

    [Fact]
    public async Task A_sender_key_made_by_keys_new_goes_on_an_allow_list_and_an_opened_up_pair_file_is_refused()
    {
        var path = Path.Combine(_work.Path, "sender.key");
        var (code, output, error) = await CliRunner.RunAsync("keys", "new", path);
        Assert.True(code == 0, error);
        Assert.Contains("Curve:AllowedClientKeysFile", output, StringComparison.Ordinal);

        var publicKey = CurveKeyFile.ReadPublicKey(path);
        var listFile = Path.Combine(_work.Path, "senders.keys");
        File.WriteAllText(listFile, $"# {path}\n{publicKey}\n");
        var list = ClientKeyAllowList.Read(listFile);
        Assert.True(list.Contains(NetMQ.NetMQCertificate.FromPublicKey(publicKey).PublicKey));

        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.GroupRead);
            var ex = Assert.Throws<InvalidDataException>(() => CurveKeyFile.ReadKeyPair(path));
            Assert.Contains("chmod 600", ex.Message, StringComparison.Ordinal);
        }
    }

    [Fact]
    public async Task An_existing_key_file_is_kept_without_force_and_replaced_owner_only_with_it()
    {
        var path = Path.Combine(_work.Path, "ingest-server.key");
        Assert.Equal(0, (await CliRunner.RunAsync("keys", "new", path)).ExitCode);
        var first = File.ReadAllText(path);

        var (refused, _, error) = await CliRunner.RunAsync("keys", "new", path);

        Assert.Equal(2, refused);
        Assert.Contains(path, error, StringComparison.Ordinal);
        Assert.Contains("--force", error, StringComparison.Ordinal);
        Assert.Equal(first, File.ReadAllText(path));

        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.GroupRead | UnixFileMode.OtherRead);
        }

        Assert.Equal(0, (await CliRunner.RunAsync("keys", "new", path, "--force")).ExitCode);
        Assert.NotEqual(first, File.ReadAllText(path));
        Assert.NotNull(CurveKeyFile.ReadKeyPair(path));
        if (!OperatingSystem.IsWindows())
        {
            Assert.False(CurveKeyFile.IsReadableByOthers(path));
        }
    }
}
