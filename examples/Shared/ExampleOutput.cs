using System;
using System.IO;

namespace OnlineRidge.Examples
{
    /// <summary>Where an example writes its files: an <c>output/</c> folder beside its project file (git-ignored), and docs/images for the README.</summary>
    internal static class ExampleOutput
    {
        /// <summary>Finds the example's project folder by walking up from the build output until <paramref name="projectName"/>.csproj appears.</summary>
        public static string ProjectFolder(string projectName)
        {
            var dir = new DirectoryInfo(AppContext.BaseDirectory);
            while (dir is not null && !File.Exists(Path.Combine(dir.FullName, projectName + ".csproj")))
            {
                dir = dir.Parent;
            }

            return dir?.FullName ?? Directory.GetCurrentDirectory();
        }

        /// <summary>Creates (if needed) and returns the example's output folder.</summary>
        public static string Folder(string projectName)
        {
            string folder = Path.Combine(ProjectFolder(projectName), "output");
            Directory.CreateDirectory(folder);
            return folder;
        }

        /// <summary>Copies one representative image to docs/images/<paramref name="imageName"/> of the repository (two levels above the project), if that folder exists.</summary>
        public static string? PublishToDocs(string projectName, string sourceFile, string imageName)
        {
            string? repository = Directory.GetParent(ProjectFolder(projectName))?.Parent?.FullName;
            if (repository is null || !Directory.Exists(Path.Combine(repository, "docs")))
            {
                return null;
            }

            string target = Path.Combine(repository, "docs", "images", imageName);
            Directory.CreateDirectory(Path.GetDirectoryName(target)!);
            File.Copy(sourceFile, target, overwrite: true);
            return target;
        }
    }
}
