using StudyPress.Cli;

HugePages.AdviseHeap();
return StudyPressCommand.Run(args, Console.Out, Console.Error, interactive: !Console.IsOutputRedirected);
