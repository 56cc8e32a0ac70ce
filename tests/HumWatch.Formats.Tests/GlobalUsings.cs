global using HumWatch.TestSupport;
global using Xunit;
