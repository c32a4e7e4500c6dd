// Part of scripts/check-package.sh: this must NOT build. do loops are not supported in this version, so the
// analyzer that ships in the DerivGen package reports DG0001 on the loop (and the generator emits nothing for the method).
using DerivGen;

namespace Unsupported;

public static partial class Sums
{
    [Differentiate]
    public static double Powers(double x)
    {
        double s = 0;
        int i = 1;
        do
        {
            s += x * i;
            i++;
        }
        while (i <= 3);

        return s;
    }

    public static void Main()
    {
    }
}
