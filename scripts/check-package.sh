#!/usr/bin/env bash
# Checks a packed DerivGen package the way a user meets it.
#
#   usage: scripts/check-package.sh FEED_DIR      (FEED_DIR holds DerivGen.<version>.nupkg, e.g. from dotnet pack -o)
#
# 1. The package carries the runtime assembly for both targets, the generator/analyzer and the code fixes under
#    analyzers/dotnet/cs, the MSBuild check under build/, and the README.
# 2. A fresh console project OUTSIDE the repository, whose only reference is the package from FEED_DIR, builds with
#    warnings as errors and runs scripts/package-consumer/: functions written for this check alone, whose generated
#    values must equal the originals bit for bit and whose gradients and Hessians must match hand-derived closed
#    forms and central differences.
# 3. A second fresh project with a do loop inside a [Differentiate] method must fail to build with DG0001, proving the
#    analyzer ships in the package too.
# A private NuGet cache is used so that a previously cached DerivGen of the same version can never be picked up.
set -euo pipefail

feed="$(cd "${1:?usage: check-package.sh FEED_DIR}" && pwd)"
here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
repo="$(cd "$here/.." && pwd)"

shopt -s nullglob
packages=("$feed"/DerivGen.[0-9]*.nupkg)
shopt -u nullglob
if [[ ${#packages[@]} -ne 1 ]]; then
    echo "Expected exactly one DerivGen.<version>.nupkg in $feed, found ${#packages[@]}."
    exit 1
fi
nupkg="${packages[0]}"
version="$(basename "$nupkg" .nupkg)"
version="${version#DerivGen.}"
echo "Package: $(basename "$nupkg") (version $version)"

# --- 1. package layout -------------------------------------------------------------------------------------------
if command -v unzip >/dev/null 2>&1; then
    entries="$(unzip -Z1 "$nupkg")"
else
    entries="$(python3 -c 'import sys, zipfile; print("\n".join(zipfile.ZipFile(sys.argv[1]).namelist()))' "$nupkg")"
fi
for required in lib/netstandard2.0/DerivGen.dll lib/net10.0/DerivGen.dll analyzers/dotnet/cs/DerivGen.Generator.dll \
    analyzers/dotnet/cs/DerivGen.CodeFixes.dll build/DerivGen.targets README.md; do
    if ! grep -qxF "$required" <<<"$entries"; then
        echo "The package lacks $required. It contains:"
        echo "$entries"
        exit 1
    fi
    echo "  contains $required"
done
# The code fixes need Roslyn's Workspaces, which the editor provides: the package must not carry it, nor any other
# assembly next to the generator (the compiler would load it).
unexpected="$(grep -E '^analyzers/' <<<"$entries" | grep -vxF -e analyzers/dotnet/cs/DerivGen.Generator.dll -e analyzers/dotnet/cs/DerivGen.CodeFixes.dll || true)"
if [[ -n "$unexpected" ]]; then
    echo "Unexpected files under analyzers/:"
    echo "$unexpected"
    exit 1
fi
symbols="${nupkg%.nupkg}.snupkg"
if [[ ! -f "$symbols" ]]; then
    echo "No symbol package $(basename "$symbols") beside the package."
    exit 1
fi
echo "  symbols: $(basename "$symbols")"

# --- a scratch area outside the repository -----------------------------------------------------------------------
scratch="$(mktemp -d "${TMPDIR:-/tmp}/derivgen-consumer.XXXXXX")"
trap 'rm -rf "$scratch"' EXIT
case "$scratch/" in
    "$repo"/*) echo "The scratch folder $scratch is inside the repository; set TMPDIR elsewhere."; exit 1 ;;
esac

export NUGET_PACKAGES="$scratch/nuget-packages"
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1 DOTNET_SKIP_FIRST_TIME_EXPERIENCE=1

# Stop MSBuild and NuGet from picking up anything above the scratch folder.
echo '<Project />' > "$scratch/Directory.Build.props"
echo '<Project />' > "$scratch/Directory.Build.targets"
echo '<Project />' > "$scratch/Directory.Packages.props"
cat > "$scratch/nuget.config" <<XML
<?xml version="1.0" encoding="utf-8"?>
<configuration>
  <packageSources>
    <clear />
    <add key="local-derivgen" value="$feed" />
    <add key="nuget.org" value="https://api.nuget.org/v3/index.json" protocolVersion="3" />
  </packageSources>
</configuration>
XML

write_project() { # $1 = project folder
    mkdir -p "$1"
    cat > "$1/$(basename "$1").csproj" <<XML
<Project Sdk="Microsoft.NET.Sdk">
  <PropertyGroup>
    <OutputType>Exe</OutputType>
    <TargetFramework>net10.0</TargetFramework>
    <Nullable>enable</Nullable>
    <ImplicitUsings>disable</ImplicitUsings>
    <TreatWarningsAsErrors>true</TreatWarningsAsErrors>
  </PropertyGroup>
  <ItemGroup>
    <PackageReference Include="DerivGen" Version="$version" />
  </ItemGroup>
</Project>
XML
}

# --- 2. a consumer of smooth functions ---------------------------------------------------------------------------
consumer="$scratch/Consumer"
write_project "$consumer"
cp "$here"/package-consumer/*.cs "$consumer/"
echo
echo "Building a fresh consumer project in $consumer (only reference: DerivGen $version from $feed)"
dotnet build "$consumer" -c Release -warnaserror
echo
echo "Running it"
dotnet run --project "$consumer" -c Release --no-build

# Make sure the package, not something else, was used.
if [[ ! -f "$NUGET_PACKAGES/derivgen/$version/analyzers/dotnet/cs/DerivGen.Generator.dll" ]]; then
    echo "The consumer did not restore DerivGen $version into the private cache $NUGET_PACKAGES."
    exit 1
fi

# --- 3. the analyzer ships too -------------------------------------------------------------------------------------
unsupported="$scratch/Unsupported"
write_project "$unsupported"
cp "$here"/package-consumer-unsupported/*.cs "$unsupported/"
echo
echo "Building a project with a loop whose trip count depends on a variable: DG0001 is expected"
set +e
dotnet build "$unsupported" -c Release > "$scratch/unsupported.log" 2>&1
unsupported_rc=$?
set -e
if [[ $unsupported_rc -eq 0 ]] || ! grep -q "error DG0001" "$scratch/unsupported.log"; then
    echo "Expected the build to fail with error DG0001; exit code $unsupported_rc, output:"
    cat "$scratch/unsupported.log"
    exit 1
fi
grep "error DG0001" "$scratch/unsupported.log" | sort -u | head -n 3
echo
echo "Package check passed."
