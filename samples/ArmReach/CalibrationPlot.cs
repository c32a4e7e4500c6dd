using System;
using System.Globalization;
using System.IO;
using System.Text;

namespace ArmReach;

/// <summary>
/// Writes the calibration plot as a plain SVG file, by hand (no plotting package): the measured tip positions against
/// the positions the fitted model predicts for the same poses, the misfits magnified so that millimetres show on a
/// metre scale, and the arm drawn at one pose with the fitted link lengths. The output is the same bytes on every
/// run, machine and culture (invariant formatting, fixed precision, '\n' line endings, UTF-8 without a byte order mark).
/// </summary>
public static class CalibrationPlot
{
    /// <summary>How much the misfit segments are magnified (the misfits are millimetres, the workspace metres).</summary>
    public const double MisfitMagnification = 50;

    private const double Height = 720, MinimumWidth = 640;
    private const double MarginLeft = 64, MarginTop = 84, MarginBottom = 56;
    private const double LegendWidth = 250, LegendGap = 24, MarginRight = 16;
    private const double GridStep = 0.25;   // m; labels every second line

    /// <summary>Writes the plot to <paramref name="path"/>.</summary>
    /// <param name="data">The (invented) measurements.</param>
    /// <param name="fitted">The fitted (upperLength, foreLength, shoulderOffset).</param>
    /// <param name="armPose">The pose at which the arm is drawn.</param>
    /// <param name="path">The file to write.</param>
    public static void Write(CalibrationData data, ReadOnlySpan<double> fitted, int armPose, string path)
    {
        int n = data.Shoulder.Length;
        double upperLength = fitted[0], foreLength = fitted[1], offset = fitted[2];
        var predictedX = new double[n];
        var predictedY = new double[n];
        for (int i = 0; i < n; i++)
        {
            (predictedX[i], predictedY[i]) = TwoLinkArm.Tip(data.Shoulder[i] + offset, data.Elbow[i], upperLength, foreLength);
        }

        double elbowX = upperLength * Math.Cos(data.Shoulder[armPose] + offset);
        double elbowY = upperLength * Math.Sin(data.Shoulder[armPose] + offset);

        // The region shown: the shoulder at the origin, every point and misfit end, on a whole number of grid steps.
        double xMin = 0, xMax = 0, yMin = 0, yMax = 0;
        void Include(double x, double y)
        {
            xMin = Math.Min(xMin, x); xMax = Math.Max(xMax, x);
            yMin = Math.Min(yMin, y); yMax = Math.Max(yMax, y);
        }

        Include(elbowX, elbowY);
        for (int i = 0; i < n; i++)
        {
            Include(data.MeasuredX[i], data.MeasuredY[i]);
            Include(predictedX[i], predictedY[i]);
            Include(MisfitEndX(i), MisfitEndY(i));
        }

        double MisfitEndX(int i) => predictedX[i] + MisfitMagnification * (data.MeasuredX[i] - predictedX[i]);
        double MisfitEndY(int i) => predictedY[i] + MisfitMagnification * (data.MeasuredY[i] - predictedY[i]);

        xMin = Math.Floor(xMin / GridStep - 0.2) * GridStep;
        xMax = Math.Ceiling(xMax / GridStep + 0.2) * GridStep;
        yMin = Math.Floor(yMin / GridStep - 0.2) * GridStep;
        yMax = Math.Ceiling(yMax / GridStep + 0.2) * GridStep;
        // Equal scales in x and y; the height is fixed, the width follows from the data, the legend sits to the right.
        double scale = (Height - MarginTop - MarginBottom) / (yMax - yMin);
        double legendX = MarginLeft + (xMax - xMin) * scale + LegendGap;
        double width = Math.Max(MinimumWidth, legendX + LegendWidth + MarginRight);
        double Px(double x) => MarginLeft + (x - xMin) * scale;
        double Py(double y) => MarginTop + (yMax - y) * scale;   // SVG's y axis points down

        var svg = new StringBuilder();
        void Line(string text) => svg.Append(text).Append('\n');

        Line("<?xml version=\"1.0\" encoding=\"UTF-8\"?>");
        Line(F($"<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{width:F0}\" height=\"{Height}\" viewBox=\"0 0 {width:F0} {Height}\" font-family=\"sans-serif\" font-size=\"12\">"));
        Line("<!-- Written by samples/ArmReach (DerivGen sample). ALL DATA ARE INVENTED: no arm was measured. -->");
        Line(F($"<rect x=\"0\" y=\"0\" width=\"{width:F0}\" height=\"{Height}\" fill=\"white\"/>"));
        Line(F($"<text x=\"{MarginLeft}\" y=\"24\" font-size=\"16\" font-weight=\"bold\">Two-link arm calibration: measured tip vs fitted model</text>"));
        Line(F($"<text x=\"{MarginLeft}\" y=\"44\" fill=\"#b00000\">INVENTED DATA for illustration only; not for controlling a real machine.</text>"));
        Line(F($"<text x=\"{MarginLeft}\" y=\"62\">Fitted: upper link {upperLength:F4} m, forearm {foreLength:F4} m, shoulder offset {offset:F4} rad; {n} poses.</text>"));

        // Grid and axis labels (metres).
        Line("<g stroke=\"#dddddd\" stroke-width=\"1\">");
        for (double x = xMin; x <= xMax + 1e-9; x += GridStep)
        {
            Line(F($"<line x1=\"{Px(x):F1}\" y1=\"{Py(yMin):F1}\" x2=\"{Px(x):F1}\" y2=\"{Py(yMax):F1}\"/>"));
        }

        for (double y = yMin; y <= yMax + 1e-9; y += GridStep)
        {
            Line(F($"<line x1=\"{Px(xMin):F1}\" y1=\"{Py(y):F1}\" x2=\"{Px(xMax):F1}\" y2=\"{Py(y):F1}\"/>"));
        }

        Line("</g>");
        Line(F($"<rect x=\"{Px(xMin):F1}\" y=\"{Py(yMax):F1}\" width=\"{(xMax - xMin) * scale:F1}\" height=\"{(yMax - yMin) * scale:F1}\" fill=\"none\" stroke=\"#888888\"/>"));
        for (double x = FirstLabel(xMin); x <= xMax + 1e-9; x += 2 * GridStep)
        {
            Line(F($"<text x=\"{Px(x):F1}\" y=\"{Py(yMin) + 18:F1}\" text-anchor=\"middle\">{x + 0.0:F1}</text>"));
        }

        for (double y = FirstLabel(yMin); y <= yMax + 1e-9; y += 2 * GridStep)
        {
            Line(F($"<text x=\"{Px(xMin) - 6:F1}\" y=\"{Py(y) + 4:F1}\" text-anchor=\"end\">{y + 0.0:F1}</text>"));
        }

        Line(F($"<text x=\"{(Px(xMin) + Px(xMax)) / 2:F1}\" y=\"{Py(yMin) + 38:F1}\" text-anchor=\"middle\">x (m)</text>"));
        Line(F($"<text x=\"{Px(xMin) - 44:F1}\" y=\"{(Py(yMin) + Py(yMax)) / 2:F1}\" text-anchor=\"middle\" transform=\"rotate(-90 {Px(xMin) - 44:F1} {(Py(yMin) + Py(yMax)) / 2:F1})\">y (m)</text>"));

        // The arm at one pose, with the fitted lengths and offset.
        Line(F($"<polyline points=\"{Px(0):F1},{Py(0):F1} {Px(elbowX):F1},{Py(elbowY):F1} {Px(predictedX[armPose]):F1},{Py(predictedY[armPose]):F1}\" fill=\"none\" stroke=\"#555555\" stroke-width=\"6\" stroke-linecap=\"round\" stroke-linejoin=\"round\" opacity=\"0.45\"/>"));
        Line(F($"<circle cx=\"{Px(0):F1}\" cy=\"{Py(0):F1}\" r=\"7\" fill=\"#555555\"/>"));
        Line(F($"<circle cx=\"{Px(elbowX):F1}\" cy=\"{Py(elbowY):F1}\" r=\"5\" fill=\"#555555\"/>"));
        Line(F($"<text x=\"{Px(0) + 10:F1}\" y=\"{Py(0) + 18:F1}\" fill=\"#555555\">shoulder</text>"));

        // Misfits, magnified; measured tips; predicted tips.
        Line("<g stroke=\"#d08000\" stroke-width=\"1.5\">");
        for (int i = 0; i < n; i++)
        {
            Line(F($"<line x1=\"{Px(predictedX[i]):F1}\" y1=\"{Py(predictedY[i]):F1}\" x2=\"{Px(MisfitEndX(i)):F1}\" y2=\"{Py(MisfitEndY(i)):F1}\"/>"));
        }

        Line("</g>");
        Line("<g fill=\"none\" stroke=\"#1f5fbf\" stroke-width=\"1.5\">");
        for (int i = 0; i < n; i++)
        {
            Line(F($"<circle cx=\"{Px(data.MeasuredX[i]):F1}\" cy=\"{Py(data.MeasuredY[i]):F1}\" r=\"6\"/>"));
        }

        Line("</g>");
        Line("<g stroke=\"#c02020\" stroke-width=\"1.5\">");
        for (int i = 0; i < n; i++)
        {
            Line(Cross(Px(predictedX[i]), Py(predictedY[i])));
        }

        Line("</g>");

        // Legend, right of the plot.
        double lx = legendX, ly = MarginTop;
        Line(F($"<rect x=\"{lx:F1}\" y=\"{ly:F1}\" width=\"{LegendWidth}\" height=\"86\" fill=\"white\" stroke=\"#888888\"/>"));
        Line(F($"<circle cx=\"{lx + 16:F1}\" cy=\"{ly + 18:F1}\" r=\"6\" fill=\"none\" stroke=\"#1f5fbf\" stroke-width=\"1.5\"/>"));
        Line(F($"<text x=\"{lx + 30:F1}\" y=\"{ly + 22:F1}\">measured tip (invented)</text>"));
        Line(F($"<g stroke=\"#c02020\" stroke-width=\"1.5\">{Cross(lx + 16, ly + 38)}</g>"));
        Line(F($"<text x=\"{lx + 30:F1}\" y=\"{ly + 42:F1}\">tip predicted by the fitted model</text>"));
        Line(F($"<line x1=\"{lx + 8:F1}\" y1=\"{ly + 58:F1}\" x2=\"{lx + 24:F1}\" y2=\"{ly + 58:F1}\" stroke=\"#d08000\" stroke-width=\"1.5\"/>"));
        Line(F($"<text x=\"{lx + 30:F1}\" y=\"{ly + 62:F1}\">misfit (measured − fitted) × {MisfitMagnification}</text>"));
        Line(F($"<line x1=\"{lx + 8:F1}\" y1=\"{ly + 76:F1}\" x2=\"{lx + 24:F1}\" y2=\"{ly + 76:F1}\" stroke=\"#555555\" stroke-width=\"6\" opacity=\"0.45\"/>"));
        Line(F($"<text x=\"{lx + 30:F1}\" y=\"{ly + 80:F1}\">fitted arm at pose {armPose + 1}</text>"));
        Line("</svg>");

        File.WriteAllText(path, svg.ToString(), new UTF8Encoding(encoderShouldEmitUTF8Identifier: false));
    }

    private static string Cross(double x, double y) =>
        F($"<path d=\"M{x - 5:F1},{y - 5:F1} L{x + 5:F1},{y + 5:F1} M{x - 5:F1},{y + 5:F1} L{x + 5:F1},{y - 5:F1}\"/>");

    /// <summary>The first labelled grid line: the smallest multiple of 2 · GridStep at or above <paramref name="min"/>.
    /// (The grid steps are exact binary fractions, so repeated addition hits the multiples exactly; adding 0.0 when
    /// printing turns −0 into 0.)</summary>
    private static double FirstLabel(double min) => Math.Ceiling(min / (2 * GridStep)) * (2 * GridStep);

    private static string F(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
