"""Fuzzes the module's case loading (and the runs of what loads) with the
case loader's fuzzing corpus and random mutations of it. Only
rxtrain.InputError and rxtrain.SolverError may come out; any other
exception, or a crash of the interpreter, is a finding.

    python3 fuzz_load.py CORPUS_DIR SECONDS SEED LAST_INPUT_FILE

Prints "N inputs, L loaded, R ran" on success. Before each input it writes
the input to LAST_INPUT_FILE, so that a crash leaves the input behind.
"""

import os
import random
import sys
import time

import rxtrain

# Values that probe the loader's range checks and the solvers' guards.
ODD_VALUES = ["0", "-1", "1e308", "-1e308", "1e-308", "nan", ".nan", "inf", "-.inf", "''",
              "[]", "{}", "~", "1e400", "0x10", "999999999999999999999", "\"\"", "&a", "*a",
              "!!binary AAAA", "<<: *a"]
YAML_BITS = [":", "-", " ", "\n", "{", "}", "[", "]", ",", "#", "'", '"', "\t", "|", ">",
             "*", "&", "!", "%", "@", "`", "\x00", "é", "\ufeff"]


def mutate(text, rng, corpus):
    """One to four random edits: a byte, a number, a line, or a splice."""
    for _ in range(rng.randint(1, 4)):
        kind = rng.randrange(7)
        pos = rng.randrange(len(text) + 1)
        if kind == 0 and text:  # delete a run of characters
            text = text[:pos] + text[pos + rng.randint(1, 8):]
        elif kind == 1:  # insert YAML punctuation
            text = text[:pos] + rng.choice(YAML_BITS) + text[pos:]
        elif kind == 2:  # replace a number with an odd value
            digits = [i for i, ch in enumerate(text) if ch.isdigit()]
            if digits:
                i = rng.choice(digits)
                j = i
                while j < len(text) and (text[j].isdigit() or text[j] in ".eE-+"):
                    j += 1
                text = text[:i] + rng.choice(ODD_VALUES) + text[j:]
        elif kind == 3:  # duplicate or drop a line
            lines = text.split("\n")
            k = rng.randrange(len(lines))
            if rng.random() < 0.5:
                lines.insert(k, lines[k])
            else:
                del lines[k]
            text = "\n".join(lines)
        elif kind == 4:  # splice with another corpus input
            other = rng.choice(corpus)
            text = text[:pos] + other[rng.randrange(len(other) + 1):]
        elif kind == 5 and text:  # flip a character
            text = text[:pos - 1] + chr(rng.randrange(1, 0x250)) + text[pos:] if pos else text
        else:  # swap two lines' indentation
            lines = text.split("\n")
            k = rng.randrange(len(lines))
            lines[k] = " " * rng.choice([0, 1, 2, 3, 4, 8]) + lines[k].lstrip()
            text = "\n".join(lines)
    return text


def main():
    corpus_dir, seconds, seed, last = sys.argv[1], float(sys.argv[2]), int(sys.argv[3]), sys.argv[4]
    corpus = []
    for name in sorted(os.listdir(corpus_dir)):
        with open(os.path.join(corpus_dir, name), "rb") as f:
            corpus.append(f.read().decode("utf-8", errors="replace"))
    rng = random.Random(seed)
    deadline = time.monotonic() + seconds
    n = loaded = ran = 0
    while time.monotonic() < deadline:
        # Every corpus input once as it is, then mutants.
        text = corpus[n] if n < len(corpus) else mutate(rng.choice(corpus), rng, corpus)
        with open(last, "w", encoding="utf-8", errors="surrogatepass") as f:
            f.write(text)
        n += 1
        try:
            case = rxtrain.load_case_text(text, "fuzz.yaml")
        except rxtrain.InputError as e:
            assert e.message and isinstance(e.line, int), repr(e)
            continue
        loaded += 1
        try:
            case.run()
            ran += 1
        except (rxtrain.InputError, rxtrain.SolverError):
            pass
    print(f"{n} inputs, {loaded} loaded, {ran} ran")


if __name__ == "__main__":
    main()
