using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Linq;

namespace DerivGen.Tests.Infrastructure;

/// <summary>
/// A NIST Statistical Reference Dataset for nonlinear regression (public domain), as published: the two starting
/// points, certified parameters with standard deviations from line 41, the certified residual sum of squares, and the
/// observations (y, then the predictors) from line 61. The files are copied from shared/data/nist into Data/nist so a
/// fresh clone runs on its own.
/// </summary>
internal sealed class NistDataset
{
    private NistDataset(string name, double[] start1, double[] start2, double[] certified, double[] standardDeviations, double residualSumOfSquares, double[] y, double[][] predictors)
    {
        Name = name;
        Start1 = start1;
        Start2 = start2;
        Certified = certified;
        StandardDeviations = standardDeviations;
        ResidualSumOfSquares = residualSumOfSquares;
        Y = y;
        Predictors = predictors;
    }

    public string Name { get; }

    /// <summary>NIST's first starting point ("Start 1", far from the solution).</summary>
    public double[] Start1 { get; }

    /// <summary>NIST's second starting point ("Start 2", closer to the solution).</summary>
    public double[] Start2 { get; }

    public double[] Certified { get; }

    public double[] StandardDeviations { get; }

    public double ResidualSumOfSquares { get; }

    public double[] Y { get; }

    /// <summary>The predictors, one array per predictor column (one column except for Nelson's x1, x2).</summary>
    public double[][] Predictors { get; }

    /// <summary>The (first) predictor.</summary>
    public double[] X => Predictors[0];

    public static NistDataset Load(string name)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "Data", "nist", name + ".dat");
        string[] lines = File.ReadAllLines(path);
        var start1 = new List<double>();
        var start2 = new List<double>();
        var certified = new List<double>();
        var sd = new List<double>();
        for (int i = 40; i < lines.Length && lines[i].TrimStart().StartsWith('b'); i++)
        {
            // "bK = start1 start2 certified sd"
            string[] parts = Split(lines[i]);
            start1.Add(Parse(parts[2]));
            start2.Add(Parse(parts[3]));
            certified.Add(Parse(parts[^2]));
            sd.Add(Parse(parts[^1]));
        }

        string rssLine = lines.First(l => l.StartsWith("Residual Sum of Squares:", StringComparison.Ordinal));
        double rss = Parse(Split(rssLine)[^1]);

        var y = new List<double>();
        var columns = new List<List<double>>();
        for (int i = 60; i < lines.Length; i++)
        {
            string[] parts = Split(lines[i]);
            if (parts.Length < 2)
            {
                continue;
            }

            y.Add(Parse(parts[0]));
            for (int c = 1; c < parts.Length; c++)
            {
                if (columns.Count < c)
                {
                    columns.Add(new List<double>());
                }

                columns[c - 1].Add(Parse(parts[c]));
            }
        }

        if (columns.Any(c => c.Count != y.Count))
        {
            throw new InvalidDataException($"{name}: ragged data block.");
        }

        return new NistDataset(name, start1.ToArray(), start2.ToArray(), certified.ToArray(), sd.ToArray(), rss, y.ToArray(), columns.Select(c => c.ToArray()).ToArray());
    }

    private static string[] Split(string line) => line.Split(' ', StringSplitOptions.RemoveEmptyEntries);

    private static double Parse(string s) => double.Parse(s, NumberStyles.Float, CultureInfo.InvariantCulture);
}
