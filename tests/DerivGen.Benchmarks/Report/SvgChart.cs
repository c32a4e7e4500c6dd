using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;

namespace DerivGen.Benchmarks.Report;

/// <summary>One line of a chart: (x, y) points with positive coordinates.</summary>
internal sealed record Series(string Label, string Color, IReadOnlyList<(double X, double Y)> Points);

/// <summary>
/// A log-log line chart as plain SVG text (no library, no fonts to embed): decade grid lines, labelled axes, a
/// marker per point and a legend. Numbers are written in the invariant culture so the file is the same everywhere.
/// </summary>
internal static class SvgChart
{
    private const int Width = 720;
    private const int Height = 440;
    private const int Left = 80;
    private const int Right = 200;
    private const int Top = 48;
    private const int Bottom = 56;

    public static string LogLog(string title, string subtitle, string xLabel, string yLabel, IReadOnlyList<Series> series, Func<double, string> formatY, Func<double, string> formatYTick)
    {
        var points = series.SelectMany(s => s.Points).ToList();
        if (points.Count == 0)
        {
            throw new ArgumentException("Nothing to plot.", nameof(series));
        }

        double xMin = Math.Floor(Math.Log10(points.Min(p => p.X)));
        double xMax = Math.Ceiling(Math.Log10(points.Max(p => p.X)));
        double yMin = Math.Floor(Math.Log10(points.Min(p => p.Y)));
        double yMax = Math.Ceiling(Math.Log10(points.Max(p => p.Y)));
        if (xMax <= xMin)
        {
            xMax = xMin + 1;
        }

        if (yMax <= yMin)
        {
            yMax = yMin + 1;
        }

        int plotW = Width - Left - Right, plotH = Height - Top - Bottom;
        double Px(double x) => Left + ((Math.Log10(x) - xMin) / (xMax - xMin) * plotW);
        double Py(double y) => Top + plotH - ((Math.Log10(y) - yMin) / (yMax - yMin) * plotH);

        var svg = new StringBuilder();
        svg.Append(CultureInfo.InvariantCulture, $"<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{Width}\" height=\"{Height}\" viewBox=\"0 0 {Width} {Height}\" font-family=\"sans-serif\" font-size=\"12\">\n");
        svg.Append(CultureInfo.InvariantCulture, $"  <rect x=\"0\" y=\"0\" width=\"{Width}\" height=\"{Height}\" fill=\"white\"/>\n");
        svg.Append(CultureInfo.InvariantCulture, $"  <text x=\"{Left + (plotW / 2)}\" y=\"20\" text-anchor=\"middle\" font-size=\"15\" font-weight=\"bold\">{Escape(title)}</text>\n");
        svg.Append(CultureInfo.InvariantCulture, $"  <text x=\"{Left + (plotW / 2)}\" y=\"38\" text-anchor=\"middle\" font-size=\"11\" fill=\"#555555\">{Escape(subtitle)}</text>\n");

        // Decade grid and tick labels.
        for (double e = xMin; e <= xMax + 1e-9; e++)
        {
            double x = Px(Math.Pow(10, e));
            svg.Append(CultureInfo.InvariantCulture, $"  <line x1=\"{F(x)}\" y1=\"{Top}\" x2=\"{F(x)}\" y2=\"{Top + plotH}\" stroke=\"#dddddd\"/>\n");
            svg.Append(CultureInfo.InvariantCulture, $"  <text x=\"{F(x)}\" y=\"{Top + plotH + 18}\" text-anchor=\"middle\">{Math.Pow(10, e).ToString("0", CultureInfo.InvariantCulture)}</text>\n");
        }

        for (double e = yMin; e <= yMax + 1e-9; e++)
        {
            double y = Py(Math.Pow(10, e));
            svg.Append(CultureInfo.InvariantCulture, $"  <line x1=\"{Left}\" y1=\"{F(y)}\" x2=\"{Left + plotW}\" y2=\"{F(y)}\" stroke=\"#dddddd\"/>\n");
            svg.Append(CultureInfo.InvariantCulture, $"  <text x=\"{Left - 8}\" y=\"{F(y + 4)}\" text-anchor=\"end\">{Escape(formatYTick(Math.Pow(10, e)))}</text>\n");
        }

        svg.Append(CultureInfo.InvariantCulture, $"  <rect x=\"{Left}\" y=\"{Top}\" width=\"{plotW}\" height=\"{plotH}\" fill=\"none\" stroke=\"#444444\"/>\n");
        svg.Append(CultureInfo.InvariantCulture, $"  <text x=\"{Left + (plotW / 2)}\" y=\"{Height - 14}\" text-anchor=\"middle\">{Escape(xLabel)}</text>\n");
        svg.Append(CultureInfo.InvariantCulture, $"  <text x=\"18\" y=\"{Top + (plotH / 2)}\" text-anchor=\"middle\" transform=\"rotate(-90 18 {Top + (plotH / 2)})\">{Escape(yLabel)}</text>\n");

        // Series and legend.
        int legendY = Top + 10;
        foreach (Series s in series)
        {
            var ordered = s.Points.OrderBy(p => p.X).ToList();
            string path = string.Join(" ", ordered.Select(p => $"{F(Px(p.X))},{F(Py(p.Y))}"));
            svg.Append(CultureInfo.InvariantCulture, $"  <polyline points=\"{path}\" fill=\"none\" stroke=\"{s.Color}\" stroke-width=\"2\"/>\n");
            foreach (var p in ordered)
            {
                svg.Append(CultureInfo.InvariantCulture, $"  <circle cx=\"{F(Px(p.X))}\" cy=\"{F(Py(p.Y))}\" r=\"4\" fill=\"{s.Color}\"><title>{Escape(s.Label)}: n = {p.X.ToString("R", CultureInfo.InvariantCulture)}, {Escape(formatY(p.Y))}</title></circle>\n");
            }

            int lx = Left + plotW + 16;
            svg.Append(CultureInfo.InvariantCulture, $"  <line x1=\"{lx}\" y1=\"{legendY}\" x2=\"{lx + 24}\" y2=\"{legendY}\" stroke=\"{s.Color}\" stroke-width=\"2\"/>\n");
            svg.Append(CultureInfo.InvariantCulture, $"  <circle cx=\"{lx + 12}\" cy=\"{legendY}\" r=\"4\" fill=\"{s.Color}\"/>\n");
            svg.Append(CultureInfo.InvariantCulture, $"  <text x=\"{lx + 32}\" y=\"{legendY + 4}\">{Escape(s.Label)}</text>\n");
            legendY += 22;
        }

        svg.Append("</svg>\n");
        return svg.ToString();
    }

    /// <summary>Charts written by <see cref="LogLog"/>, one below the other in one SVG.</summary>
    public static string Stack(params string[] charts)
    {
        var svg = new StringBuilder();
        svg.Append(CultureInfo.InvariantCulture, $"<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{Width}\" height=\"{Height * charts.Length}\" viewBox=\"0 0 {Width} {Height * charts.Length}\" font-family=\"sans-serif\" font-size=\"12\">\n");
        for (int i = 0; i < charts.Length; i++)
        {
            // Each chart without its own <svg> and </svg> lines, moved down by its height.
            string[] lines = charts[i].TrimEnd('\n').Split('\n');
            svg.Append(CultureInfo.InvariantCulture, $"  <g transform=\"translate(0 {Height * i})\">\n");
            foreach (string line in lines[1..^1])
            {
                svg.Append("  ").Append(line).Append('\n');
            }

            svg.Append("  </g>\n");
        }

        svg.Append("</svg>\n");
        return svg.ToString();
    }

    private static string F(double v) => v.ToString("0.##", CultureInfo.InvariantCulture);

    private static string Escape(string s) =>
        s.Replace("&", "&amp;", StringComparison.Ordinal).Replace("<", "&lt;", StringComparison.Ordinal).Replace(">", "&gt;", StringComparison.Ordinal);
}
