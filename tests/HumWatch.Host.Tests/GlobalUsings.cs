global using HumWatch.TestSupport;
