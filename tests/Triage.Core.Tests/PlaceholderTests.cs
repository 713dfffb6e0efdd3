namespace Triage.Core.Tests;

public class PlaceholderTests
{
    [Fact]
    public void Arithmetic_Works() => Assert.Equal(4, 2 + 2);
}
