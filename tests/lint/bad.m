% Every line of this file that is not blank and not a comment must be
% reported by tools/lint_matlab (tests/lint/run.sh checks them one by one).
if !x
if x != 1
x = 1; # comment
#{
% inside an Octave block comment: not reported itself
#}
endif
endfor
endwhile
endfunction
endswitch
end_try_catch
end_unwind_protect
unwind_protect
unwind_protect_cleanup
do
until x > 3
x += 1;
x -= 1;
x *= 2;
x /= 2;
x ^= 2;
x++;
x--;
--x;
y = x ** 2;
y = x .** 2;
s = "text";
fprintf ('%s\n', "a");
y = 1 + \
function y = f (a, b = 2)
function [a, b] = g (x, y = {})
y = size (x)(2);
y = f (x)(2, :);
y = [1 2 3](2);
y = c (1){2};
print_usage ();
n = rows (x);
n = columns (x);
fflush (stdout);
fprintf (stderr, 'a');
puts ('a');
fputs (fid, 'a');
fdisp (1, x);
printf ('%d\n', 1);
n = nproc ();
p = getpid ();
rename ('a', 'b');
unlink ('a');
p = make_absolute_filename ('a');
p = canonicalize_file_name ('a');
tf = is_function_handle (f);
y = postpad (x, 3);
y = prepad (x, 3);
y = vec (x);
y = nthargout (2, @max, x);
tf = isargout (1);
y = merge (c, 1, 2);
y = ifelse (c, 1, 2);
k = index ('abc', 'b');
k = rindex ('abc', 'b');
n = numfields (s);
v = OCTAVE_VERSION;
tf = exist ('OCTAVE_VERSION', 'builtin');
pkg load parallel
y = pararrayfun (2, f, 1:3);
y = parcellfun (2, f, {1});
k = lookup ([1 2 3], 2.5);
n = program_name ();
s = strjust (s, 'right');
s = substr ('hello', 2, 3);
fskipl (fid, 2);
[a, b] = textread ('f.txt', '%s %d');
[a, b] = strread ('1 2', '%d %d');
c = ostrsplit ('a:b', ':');
d = P_tmpdir;
putenv ('A', 'b');
unsetenv ('A');
[fid, name] = mkstemp ('xXXXXXX');
tf = is_valid_file_id (fid);
tf = isdir ('a');
graphics_toolkit ('gnuplot');
t = available_graphics_toolkits ();
x = __octave_config_info__ ();
h = figure ('visible', 'off', '__graphics_toolkit__', 'gnuplot');
warning ('off', 'my:id', 'local');
save ('-binary', 'f.bin', 'x');
save -text f.txt x
files = glob ('*.m');
[err, msg] = symlink ('a', 'b');
x = NA;
