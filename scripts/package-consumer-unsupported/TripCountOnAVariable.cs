// Part of scripts/check-package.sh: this must NOT build. A loop whose number of iterations depends on a
// differentiation variable is outside the supported set, so the analyzer that ships in the DerivGen package reports
// DG0001 on its condition (and the generator emits nothing for the method).
using DerivGen;

namespace Unsupported;

public static partial class Sums
{
    [Differentiate]
    public static double StepsUntilThree(double x)
    {
        double s = 0;
        while (s < 3)
        {
            s += x;
        }

        return s;
    }

    public static void Main()
    {
    }
}
