#!/usr/bin/env bash
# check_pkg.sh TARBALL OCTAVE - install the Octave package TARBALL into a
# temporary prefix (the user's package list untouched), load it with
# "pkg load sluice" and no addpath, and run "test sluice.<name>" for every
# public function from the installed copy. Closing line:
# "pkg: N passed, N failed"; exit non-zero on any failure.
set -u
tarball=$(readlink -f "${1:?usage: check_pkg.sh TARBALL OCTAVE}")
octave=${2:-octave-cli --no-gui --quiet --no-history --norc}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
cat > "$tmp/sluice_pkg_check.m" <<OCT
pkg ('prefix', '$tmp/share', '$tmp/lib');
pkg ('local_list', '$tmp/packages');
% Octave 7.3 reports any package function named like a built-in one
% (sluice.filter) as shadowing it; nothing is shadowed
warning ('off', 'Octave:shadowed-function');
pkg ('install', '-local', '$tarball');
pkg ('load', 'sluice');
d = pkg ('list', 'sluice');
where = d{1}.dir;
if (isempty (strfind (which ('sluice.filter'), '$tmp')))
  error ('check_pkg: sluice.filter does not come from the installed package');
end
printf ('installed in %s\n', where);
% lookfor sees the package's functions (the index PKG_ADD put in place)
found = lookfor ('assimilate');
if (~any (strcmp (found, 'sluice.filter')))
  error ('check_pkg: lookfor does not find sluice.filter in the installed package');
end
% the overview by task
if (isempty (strfind (help ('sluice.Contents'), 'sluice.twin')))
  error ('check_pkg: help sluice.Contents does not list sluice.twin');
end
f = dir (fullfile (where, '+sluice', '*.m'));
np = 0; nf = 0;
for k = 1:numel (f)
  [~, name] = fileparts (f(k).name);
  if (strcmp (name, 'Contents'))
    continue;
  end
  fn = ['sluice.' name];
  logf = [tempname() '.log'];
  fid = fopen (logf, 'w');
  t0 = tic ();
  [n, nmax] = test (fn, 'quiet', fid);
  fclose (fid);
  if (nmax == 0 || n < nmax)
    printf ('FAIL test %s: %d of %d passed\n%s\n', fn, n, nmax, fileread (logf));
    nf += max (1, nmax - n);
  else
    printf ('ok   test %-24s %3d tests %6.1f s\n', fn, nmax, toc (t0));
  end
  np += n;
  delete (logf);
end
printf ('pkg: %d passed, %d failed\n', np, nf);
exit (nf > 0);
OCT
cd "$tmp" && $octave "$tmp/sluice_pkg_check.m"
