using System.Text.RegularExpressions;
using Triage.Api.Tests.Infrastructure;
using YamlDotNet.RepresentationModel;

namespace Triage.Api.Tests.Operations;

/// <summary>
/// docker-compose.yml and deploy/nginx.conf agree: the proxy spreads requests over at least two
/// replicas that are services of the compose file built from the same image and reach the same
/// database, only the proxy publishes a port, and the proxy starts after the replicas are healthy.
/// (`docker-compose config -q` validates the compose file itself where Docker Compose is installed;
/// see docs/operations.md.)
/// </summary>
public sealed class DeploymentFilesTests
{
    private static YamlMappingNode Services()
    {
        var yaml = new YamlStream();
        yaml.Load(new StringReader(File.ReadAllText(Repository.File("docker-compose.yml"))));
        return (YamlMappingNode)((YamlMappingNode)yaml.Documents[0].RootNode)["services"];
    }

    private static string Scalar(YamlNode node, params string[] path)
    {
        foreach (var key in path)
        {
            node = ((YamlMappingNode)node)[key];
        }
        return ((YamlScalarNode)node).Value!;
    }

    private static List<string> Upstreams() =>
        Regex.Matches(File.ReadAllText(Repository.File("deploy", "nginx.conf")), @"^\s*server\s+([a-z0-9_-]+):(\d+)", RegexOptions.Multiline)
            .Select(m => m.Groups[1].Value + ":" + m.Groups[2].Value).ToList();

    [Fact]
    public void Proxy_SpreadsOverTwoReplicasOfOneImageOnOneDatabase()
    {
        var services = Services();
        var upstreams = Upstreams();

        Assert.True(upstreams.Count >= 2, $"upstream servers: {string.Join(", ", upstreams)}");
        var replicas = upstreams.Select(u => u.Split(':')[0]).ToList();
        Assert.Equal(replicas.Count, replicas.Distinct().Count());
        foreach (var name in replicas)
        {
            var replica = services[name];
            Assert.Equal("deploy/Dockerfile", Scalar(replica, "build", "dockerfile"));
            Assert.Equal("Host=db;Port=5432;Username=triage;Password=triage;Database=triage", Scalar(replica, "environment", "ConnectionStrings__Triage"));
            Assert.False(((YamlMappingNode)replica).Children.ContainsKey("ports"), $"{name} publishes a port: only the proxy should");
            Assert.Contains(upstreams.First(u => u.StartsWith(name + ":", StringComparison.Ordinal)).Split(':')[1],
                ((YamlSequenceNode)replica["expose"]).Children.Select(c => ((YamlScalarNode)c).Value));
        }

        var proxy = (YamlMappingNode)services["proxy"];
        Assert.StartsWith("nginx:", Scalar(proxy, "image"), StringComparison.Ordinal);
        Assert.Contains("./deploy/nginx.conf:/etc/nginx/nginx.conf:ro", ((YamlSequenceNode)proxy["volumes"]).Children.Select(c => ((YamlScalarNode)c).Value));
        Assert.Single((YamlSequenceNode)proxy["ports"]);
        var waitsFor = (YamlMappingNode)proxy["depends_on"];
        Assert.All(replicas, r => Assert.Equal("service_healthy", Scalar(waitsFor, r, "condition")));
        Assert.Single(services.Children.Keys.Select(k => ((YamlScalarNode)k).Value), n => n == "db");
    }
}
