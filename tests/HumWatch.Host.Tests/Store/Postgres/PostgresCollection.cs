using HumWatch.TestSupport;
using Xunit;

namespace HumWatch.Host.Tests.Store.Postgres;

/// <summary>The test classes that share the one <see cref="PostgresServer"/>; it is stopped when they are done.</summary>
[CollectionDefinition(Name)]
public sealed class PostgresCollection : ICollectionFixture<PostgresServer>
{
    public const string Name = "postgres";
}
