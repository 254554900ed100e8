#!/bin/sh
# Rebuilds the three Inter weights in this folder as subsets of the files in the npm package @expo-google-fonts/inter
# (SIL Open Font License 1.1, no Reserved Font Name: a subset may keep the name; Inter-OFL.txt stays beside them).
# Kept: Latin, Greek and Cyrillic letters with their accents, punctuation, super- and subscripts, currency, letterlike
# symbols, number forms, arrows, mathematical operators and technical, geometric and other symbols Inter draws;
# the layout features for tabular figures (the clock, the readings), fractions, case, super- and subscripts, kerning.
# Dropped: Inter's stylistic alternates and rarely used scripts. src/providers/fontFiles.test.ts checks the result.
# Needs fontTools: python3 -m pip install fonttools (or set PYFTSUBSET to its pyftsubset).
set -eu
cd "$(dirname "$0")"
SRC=../../node_modules/@expo-google-fonts/inter
UNICODES="U+0000-024F,U+0250-02FF,U+0300-036F,U+0370-03FF,U+0400-04FF,U+1D00-1DBF,U+1E00-1EFF,U+2000-206F,\
U+2070-209F,U+20A0-20CF,U+2100-214F,U+2150-218F,U+2190-21FF,U+2200-22FF,U+2300-23FF,U+25A0-25FF,U+2600-26FF,\
U+2700-27BF,U+FB00-FB06,U+FEFF,U+FFFD"
for w in 400Regular 600SemiBold 700Bold; do
  "${PYFTSUBSET:-pyftsubset}" "$SRC/$w/Inter_$w.ttf" --unicodes="$UNICODES" --layout-features+=tnum,case,sups,subs \
    --name-IDs='*' --name-languages='*' --notdef-outline --output-file="Inter_$w.ttf"
done
