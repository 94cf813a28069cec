using StudyPress.Cli;

HugePages.AdviseHeap();

// The engine's matrix routines run on the calling thread (docs/performance.md, "Math.NET on one thread").
MathNet.Numerics.Control.MaxDegreeOfParallelism = 1;
return StudyPressCommand.Run(args, Console.Out, Console.Error, interactive: !Console.IsOutputRedirected);
