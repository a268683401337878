using Xunit;
namespace OnlineRidge.Tests
{
    public class SmokeTests
    {
        [Fact]
        public void BuildFlavourMatchesTestProject()
        {
#if LIBRARY_NETSTANDARD
            Assert.False(BuildInfo.HasIntrinsicKernels);
#else
            Assert.True(BuildInfo.HasIntrinsicKernels);
#endif
        }

        [FsCheck.Xunit.Property]
        public bool AdditionCommutes(int a, int b) => a + b == b + a;
    }
}
