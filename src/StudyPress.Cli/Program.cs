using StudyPress.Cli;

return StudyPressCommand.Run(args, Console.Out, Console.Error, interactive: !Console.IsOutputRedirected);
