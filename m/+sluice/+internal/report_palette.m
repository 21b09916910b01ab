% -*- texinfo -*-
% @deftypefn  {} {@var{c} =} sluice.internal.report_palette (@var{which})
% @deftypefnx {} {@var{p} =} sluice.internal.report_palette ()
% The colours of the report's figures, chosen to read in grey and in colour.
%
% @var{c} is the sRGB colour (1 x 3, values in [0, 1]) of one role:
% @code{'obs'} (observation markers), @code{'line'} (ensemble median,
% mean, ESS), @code{'smooth'} (smoothed median and band), @code{'truth'},
% @code{'mark'} (resampling marks), @code{'inner'} (50% band) and
% @code{'outer'} (90% band). Any other name gives @code{'mark'}.
% @var{p} is a struct with @code{names} (1 x 7 cellstr, from dark to
% light) and @code{rgb} (7 x 3, one row per name).
%
% The colours are the report's own. They were picked in two steps:
%
% 1. Lightness first. Each role gets a grey level (luma Y' =
% 0.299 R' + 0.587 G' + 0.114 B', ITU-R BT.601, on the gamma-encoded
% values) about 0.15 apart from the next, from dark to light: observations
% 0, median 0.18, smoothed estimate 0.34, truth 0.47, resampling marks
% 0.63, 50% band 0.76, 90% band 0.90. Printed in grey, the bands stay
% light and the lines dark, and no two roles share a grey.
%
% 2. Hue second, on the axis that colour-blind readers keep. Red-green
% deficiencies (protanopia, deuteranopia: most colour-blind readers) lose
% the red-green axis and keep blue-yellow, so the ensemble (median and
% bands) is one blue family and the truth, the only line drawn against
% it, is a vermilion that moves towards yellow-brown in those simulations
% and stays far from the blues. The smoothed estimate is a dark reddish
% purple, apart from the blue median by lightness and from the truth by
% lightness and by its dashed band; the resampling marks are amber
% triangles on the blue ESS line.
%
% Checked (tests/octave/test_report.m): the greys above differ by at
% least 0.1, and every pair of colours stays at least 15 CIELAB units
% apart for normal vision and under the full-severity protanopia,
% deuteranopia and tritanopia simulations of Machado, Oliveira and
% Fernandes (2009). Shapes carry meaning too: observations are markers,
% the truth a solid line, the smoothed band dashed, resampling marks
% triangles, degenerate cycles crosses.
%
% Values (sRGB):
% @example
% obs     0.00 0.00 0.00    black
% line    0.10 0.16 0.50    dark blue
% smooth  0.50 0.22 0.52    reddish purple
% truth   0.88 0.33 0.14    vermilion
% mark    0.86 0.62 0.12    amber
% inner   0.62 0.79 0.99    light blue
% outer   0.84 0.91 0.99    pale blue
% @end example
% @end deftypefn
function c = report_palette (which)
  names = {'obs', 'line', 'smooth', 'truth', 'mark', 'inner', 'outer'};
  rgb = [0.00 0.00 0.00
         0.10 0.16 0.50
         0.50 0.22 0.52
         0.88 0.33 0.14
         0.86 0.62 0.12
         0.62 0.79 0.99
         0.84 0.91 0.99];
  if (nargin < 1)
    c = struct ('names', {names}, 'rgb', rgb);
    return;
  end
  k = find (strcmp (names, which), 1);
  if (isempty (k))
    k = 5;
  end
  c = rgb(k, :);
end
