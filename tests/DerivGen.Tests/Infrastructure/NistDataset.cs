using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Linq;

namespace DerivGen.Tests.Infrastructure;

/// <summary>
/// A NIST Statistical Reference Dataset for nonlinear regression (public domain), as published: certified
/// parameters with standard deviations from line 41, the certified residual sum of squares, and the observations
/// (y, x) from line 61. The files are copied from shared/data/nist into Data/nist so a fresh clone runs on its own.
/// </summary>
internal sealed class NistDataset
{
    private NistDataset(double[] certified, double[] standardDeviations, double residualSumOfSquares, double[] y, double[] x)
    {
        Certified = certified;
        StandardDeviations = standardDeviations;
        ResidualSumOfSquares = residualSumOfSquares;
        Y = y;
        X = x;
    }

    public double[] Certified { get; }

    public double[] StandardDeviations { get; }

    public double ResidualSumOfSquares { get; }

    public double[] Y { get; }

    public double[] X { get; }

    public static NistDataset Load(string name)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "Data", "nist", name + ".dat");
        string[] lines = File.ReadAllLines(path);
        var certified = new List<double>();
        var sd = new List<double>();
        for (int i = 40; i < lines.Length && lines[i].TrimStart().StartsWith('b'); i++)
        {
            string[] parts = Split(lines[i]);
            // "bK = start1 start2 certified sd"
            certified.Add(Parse(parts[^2]));
            sd.Add(Parse(parts[^1]));
        }

        string rssLine = lines.First(l => l.StartsWith("Residual Sum of Squares:", StringComparison.Ordinal));
        double rss = Parse(Split(rssLine)[^1]);

        var y = new List<double>();
        var x = new List<double>();
        for (int i = 60; i < lines.Length; i++)
        {
            string[] parts = Split(lines[i]);
            if (parts.Length == 2)
            {
                y.Add(Parse(parts[0]));
                x.Add(Parse(parts[1]));
            }
        }

        return new NistDataset(certified.ToArray(), sd.ToArray(), rss, y.ToArray(), x.ToArray());
    }

    private static string[] Split(string line) => line.Split(' ', StringSplitOptions.RemoveEmptyEntries);

    private static double Parse(string s) => double.Parse(s, NumberStyles.Float, CultureInfo.InvariantCulture);
}
