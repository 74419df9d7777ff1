/**
 * ABC tunes invented for earwitness's tests (no real tune), one tune book
 * covering what ABC 2.1 says a reader must play: repeats, first and second
 * endings, tuplets, broken rhythm, chords, ties, a pickup, key and metre
 * changes (in the body and inline), grace notes, two voices, an octave clef.
 *
 * @example
 *   writeFileSync('book.abc', TUNE_BOOK)
 */
export const TUNE_BOOK = `%abc-2.1
% Tunes invented for earwitness's tests.

X:1
T:Gull Point Reel
M:4/4
L:1/8
K:D
|:FA dA FA dA|BG (3GAB c2 B2|1 A>B AF E2 D2:|2 A<B cd e2 d2||
|:[df]2 [ce]2 [Bd]4|a>g f>e d4:|

X:2
T:Skerrow Jig
M:6/8
L:1/8
K:Ador
A|:ABA e2d|c2A G2E|1 A3 A2G:|2 A3 A2||
K:G
M:9/8
Bcd e2f g3|(3gfe (3dcB A3- A3|

X:3
T:Kelp Waltz
M:3/4
L:1/4
Q:1/4=110
K:Bb
B,/D/F B|_e2 d/c/|=B3-|B A/G/ F|
[M:2/4] G>F|(5:4:5c/B/A/G/F/ ^F2|]

X:4
T:Two Voices
M:2/4
L:1/8
K:F
V:1
|:c2 A2|B2 G2:|
V:2
|:F,4|C,4:|

X:5
T:Tideline March
M:2/4
L:1/16
K:Eb
GF|:E2G2 B2e2|{f}g4 [K:A] a4|[EAc]4 {gf}e2c2|1 A8:|2 A4 z4|]

X:6
T:Low Fiddle
M:3/4
L:1/8
K:G clef=treble-8
G2 B2 d2|^c2 _e2 =f2|g6|]
`;
