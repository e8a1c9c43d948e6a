#!/usr/bin/python3
"""`nervegap plot`: the pictures of a run and of a comparison.

- The SVG parses as XML (Python's xml.etree) and the HTML page as HTML
  (html.parser), every inline <svg> of the page as XML too; both have the
  sections and plots expected, the page refers to nothing outside itself.
- Axes against the data (read with h5py): every scale axis spans [0, T]
  exactly (the larger T of two files); each Betti axis starts at 0 and ends
  on the first tick at or above the largest Betti number; tick values lie
  inside the axis and increase; the histogram covers every base radius.
- Barcodes: the bars drawn are the N longest (read back from the rectangles'
  pixels), bars alive at T carry an arrow, the rest are counted in words.
- Ball picture: with uniform radii a triangle is unfilled at t exactly when
  it is acute with longest side/2 ≤ t < its circumradius (Thales and the
  circumcircle, elementary geometry: DESIGN §6); the figure's count and its
  marked points equal that, computed here with numpy over every triple. At
  a grid scale the count equals the run's simplices_rips − simplices_cech
  in dimension 2; under L∞ it is 0 (hyperconvex: Aronszajn and
  Panitchpakdi, Pacific J. Math. 6, 1956). The default scale is where the
  Betti-1 numbers of Čech and Rips differ most.
- The input is read again only when unchanged (SHA-256) or given with
  --points; 3-D input gets no ball picture; a radius column is taken out.
- Comparison: both files in the figure, shared axes, and the bottleneck
  distances equal those of `nervegap distance`.
- Rendering with librsvg's rsvg-convert (Debian librsvg2-bin) gives an
  image of the declared size that is not blank: the pixels vary, many
  colours, the Čech and Rips colours present (decoded with python3-pil).
- Errors: exit code 2 and the file or flag named.

Usage: ref_plot.py NERVEGAP
"""
import html.parser
import json
import math
import os
import re
import shutil
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

import h5py
import numpy as np
from checklib import expect, finish

NERVEGAP = os.path.abspath(sys.argv[1])
SVG = "{http://www.w3.org/2000/svg}"
BLUE, ORANGE = "#1f5fa8", "#c96500"  # the Čech and Rips colours (src/svg.c)


def run(*args, cwd=None, timeout=300):
    p = subprocess.run([NERVEGAP, *args], capture_output=True, text=True, timeout=timeout, cwd=cwd)
    return p.returncode, p.stdout, p.stderr


def must(*args, cwd=None):
    rc, out, err = run(*args, cwd=cwd)
    if rc != 0:
        raise RuntimeError(f"{args}: {err}")
    return out, err


def by_id(root, ident):
    for e in root.iter():
        if e.get("id") == ident:
            return e
    return None


def classes(e):
    return (e.get("class") or "").split()


def texts(e):
    return " ".join(t.text or "" for t in e.iter(SVG + "text"))


def axes(e, which):
    return [a for a in e.iter(SVG + "g") if classes(a)[:2] == ["axis", which]]


def ticks(axis):
    return [float(t.text) for t in axis.iter(SVG + "text") if "tick" in classes(t)]


def write_csv(path, pts, header):
    with open(path, "w") as fh:
        fh.write(header + "\n")
        for p in pts:
            fh.write(",".join(f"{v:.6f}" for v in p) + "\n")


rng = np.random.default_rng(8)
tmp = tempfile.mkdtemp(prefix="ng-plot-")
try:
    # ---- fixtures: a noisy ring with a few points inside and out ----
    ang = rng.uniform(0, 2 * np.pi, 70)
    ring = np.c_[5 * np.cos(ang), 5 * np.sin(ang)] + rng.normal(0, 0.35, (70, 2))
    ring = np.r_[ring, rng.uniform(-7, 7, (12, 2))]
    ring_csv = os.path.join(tmp, "ring.csv")
    write_csv(ring_csv, ring, "east_km,north_km")
    uni = os.path.join(tmp, "uniform.h5")
    must("run", ring_csv, "--radius", "uniform", "--slices", "factor:1.1,1.05", "--grid", "64",
         "--quiet", "-o", uni)
    knn = os.path.join(tmp, "knn.h5")
    must("run", ring_csv, "--radius", "knn:4", "--scale-limit", "3", "--grid", "48", "--quiet", "-o", knn)

    # ---- the report of one run ----
    svg_path = os.path.join(tmp, "report.svg")
    _, err = must("plot", uni, "-o", svg_path)
    expect("plot: no notes when the input is there", err == "", err)
    root = ET.parse(svg_path).getroot()
    expect("svg root", root.tag == SVG + "svg")
    with h5py.File(uni, "r") as f:
        T = float(f["scheme"].attrs["scale_limit"])
        D = int(f["scheme"].attrs["max_degree"])
        scale = f["grid/scale"][:]
        bc, br = f["grid/betti_cech"][:], f["grid/betti_rips"][:]
        sc, sr = f["grid/simplices_cech"][:], f["grid/simplices_rips"][:]
        hil = f["grid/hilbert"][:]
        radius = f["vertices/radius"][:]
        bars = {(c, k): f[f"{c}/dim{k}/bars"][:] for c in ("cech", "rips") for k in range(D + 1)}
        factor_bound = float(f["divergence"].attrs["factor_bound"])
    for sec in ("summary", "barcodes", "diagrams", "curves", "hilbert", "radii", "balls"):
        expect(f"section {sec}", by_id(root, sec) is not None)
    plots = [f"barcode-{c}-{k}" for c in ("cech", "rips") for k in range(D + 1)] + \
            [f"diagram-{k}" for k in range(D + 1)] + [f"betti-{k}" for k in range(D + 1)] + \
            ["unfilled", "factor", "hilbert-1", "radii-histogram", "balls-plot"]
    for p in plots:
        expect(f"plot {p}", by_id(root, p) is not None)
    expect("summary states Λ", f"Λ = {factor_bound:.6g}" in texts(by_id(root, "summary")),
           texts(by_id(root, "summary"))[:300])

    # every scale axis is [0, T] exactly; ticks inside and increasing
    n_scale = 0
    for a in axes(root, "x") + axes(root, "y"):
        lo, hi = float(a.get("data-min")), float(a.get("data-max"))
        tv = ticks(a)
        expect("ticks inside their axis", all(lo - 1e-9 <= v <= hi + 1e-9 for v in tv), f"{tv} [{lo}, {hi}]")
        expect("ticks increase", all(x < y for x, y in zip(tv, tv[1:])), str(tv))
        label = a.get("data-label") or ""
        if label.startswith("scale t") or label.startswith("birth"):
            n_scale += 1
            expect(f"scale axis '{label}' is [0, T]", lo == 0 and hi == T, f"[{lo}, {hi}] T = {T}")
            expect("scale axis has 3+ tick values", len(tv) >= 3, str(tv))
    expect("scale axes found", n_scale >= 2 * (D + 1) + (D + 1) + (D + 1) + 2, str(n_scale))
    for k in range(D + 1):
        ya = axes(by_id(root, f"betti-{k}"), "y")[0]
        most = max(bc[:, k].max(), br[:, k].max())
        tv = ticks(ya)
        step = tv[1] - tv[0]
        hi = float(ya.get("data-max"))
        expect(f"betti-{k} axis covers the largest Betti number {most}",
               float(ya.get("data-min")) == 0 and most <= hi < most + step + 1e-9 and tv[-1] == hi,
               f"max {hi}, ticks {tv}")
    hx = axes(by_id(root, "radii-histogram"), "x")[0]
    expect("histogram covers the radii", float(hx.get("data-min")) <= radius.min()
           and float(hx.get("data-max")) >= radius.max())
    cs = [g for g in by_id(root, "hilbert-1").iter(SVG + "g") if "colour-scale" in classes(g)]
    hmax = max(bc[:, 1].max(), br[:, 1].max(), hil[:, :, 1].max())
    expect("colour scale ends at the largest β1", len(cs) == 1 and float(cs[0].get("data-max")) == hmax)

    # barcodes: the longest bars, in order, read back from the pixels
    def bars_drawn(group):
        frame = next(r for r in group.iter(SVG + "rect") if r.get("fill") == "none")
        fx, fw = float(frame.get("x")), float(frame.get("width"))
        ax = axes(group, "x")[0]
        per = fw / (float(ax.get("data-max")) - float(ax.get("data-min")))
        out = []
        for r in group.iter(SVG + "rect"):
            if r.get("fill") in (BLUE, ORANGE):
                b = (float(r.get("x")) - fx) / per
                out.append((b, b + float(r.get("width")) / per, float(r.get("y"))))
        arrows = sum(1 for _ in group.iter(SVG + "polygon"))
        return out, arrows, 1 / per

    def check_barcode(root, ident, allbars, limit, T, name):
        g = by_id(root, ident)
        got, arrows, px = bars_drawn(g)
        length = allbars[:, 1] - allbars[:, 0]
        order = sorted(range(len(allbars)), key=lambda i: (-length[i], allbars[i, 0], allbars[i, 1]))
        want = [allbars[i] for i in order[:limit]]
        expect(f"{name}: {min(limit, len(allbars))} bars drawn", len(got) == len(want), f"{len(got)}")
        expect(f"{name}: longest first, top to bottom", all(a[2] < b[2] for a, b in zip(got, got[1:])))
        ok = all(abs(g_[0] - w[0]) <= 0.02 * px + 1e-9 and
                 (abs(g_[1] - w[1]) <= 0.02 * px + 1e-9 if math.isfinite(w[1]) else abs(g_[1] - T) <= 0.02 * px)
                 for g_, w in zip(got, want) if (w[1] if math.isfinite(w[1]) else T) - w[0] > 1.05 * px)
        expect(f"{name}: the bars drawn are the longest, at their birth and death", ok)
        expect(f"{name}: an arrow per bar alive at T",
               arrows == sum(1 for w in want if math.isinf(w[1])), f"{arrows}")
        if len(allbars) > limit:
            note = f"the {limit} longest of {len(allbars)} bars drawn; {len(allbars) - limit} shorter"
            expect(f"{name}: the rest counted", note in texts(g), texts(g)[-200:])
        return g

    for c in ("cech", "rips"):
        for k in range(D + 1):
            check_barcode(root, f"barcode-{c}-{k}", bars[(c, k)], 40, T, f"{c} degree {k}")
    five = os.path.join(tmp, "five.svg")
    must("plot", uni, "--bars", "5", "-o", five)
    r5 = ET.parse(five).getroot()
    check_barcode(r5, "barcode-cech-0", bars[("cech", 0)], 5, T, "--bars 5")

    # diagrams: one mark per bar, Čech hollow, Rips filled
    for k in range(D + 1):
        circles = list(by_id(root, f"diagram-{k}").iter(SVG + "circle"))
        hollow = sum(1 for e in circles if e.get("fill") == "none")
        expect(f"diagram {k}: a mark per bar", hollow == len(bars[("cech", k)])
               and len(circles) - hollow == len(bars[("rips", k)]), f"{hollow} {len(circles)}")

    # the default scale of the ball picture
    plot_g = by_id(root, "balls-plot")
    at_group = next(g for g in plot_g.iter(SVG + "g") if g.get("data-at"))
    diff = np.abs(bc[:, 1] - br[:, 1])
    want_at = scale[int(np.argmax(diff))] if diff.max() > 0 else T / 2
    expect("default scale: where Betti-1 differs most", float(at_group.get("data-at")) == want_at,
           f"{at_group.get('data-at')} vs {want_at}")

    # unfilled triangles with uniform radii against the closed form
    def unfilled_closed_form(pts, t):
        n = len(pts)
        d = np.sqrt(((pts[:, None, :] - pts[None, :, :]) ** 2).sum(-1))
        i, j, k = np.array([(a, b, c) for a in range(n) for b in range(a + 1, n) for c in range(b + 1, n)]).T
        a, b, c = d[j, k], d[i, k], d[i, j]
        longest = np.maximum(np.maximum(a, b), c)
        rips = longest / 2
        s2 = a * a + b * b + c * c - 2 * longest ** 2  # > 0: acute
        area = 0.25 * np.sqrt(np.maximum((a + b + c) * (-a + b + c) * (a - b + c) * (a + b - c), 0))
        with np.errstate(divide="ignore", invalid="ignore"):
            circ = np.where(s2 > 0, a * b * c / (4 * area), rips)
        values = np.r_[rips, circ]
        gap = np.min(np.abs(values - t))
        hit = (rips <= t) & (t < circ)
        verts = set(i[hit]) | set(j[hit]) | set(k[hit])
        return int(hit.sum()), len(verts), gap

    def ball_counts(path):
        r = ET.parse(path).getroot()
        g = by_id(r, "balls-plot")
        tri = next(e for e in g.iter(SVG + "g") if "unfilled-triangles" in classes(e))
        pts = next(e for e in g.iter(SVG + "g") if "points-unfilled" in classes(e))
        return r, int(tri.get("data-count")), sum(1 for _ in pts.iter(SVG + "circle")), \
            sum(1 for _ in tri.iter(SVG + "polygon"))

    pts = np.loadtxt(ring_csv, delimiter=",", skiprows=1)
    for t in (0.9, 1.3, 1.75, 2.4):
        count, verts, gap = unfilled_closed_form(pts, t)
        if gap < 1e-6:
            t += 2e-6
            count, verts, gap = unfilled_closed_form(pts, t)
        out = os.path.join(tmp, "at.svg")
        must("plot", uni, "--at", repr(t), "-o", out)
        r, n_tri, n_marked, n_poly = ball_counts(out)
        expect(f"t = {t}: unfilled triangles as by the circumradius ({count})",
               n_tri == count and n_poly == count, f"{n_tri} {n_poly}")
        expect(f"t = {t}: their vertices marked ({verts})", n_marked == verts, f"{n_marked}")
        # the balls: radius t·ρ (ρ = 1) in the pixels of the plot
        g = by_id(r, "balls-plot")
        frame = next(e for e in g.iter(SVG + "rect") if e.get("fill") == "none" and e.get("stroke"))
        ax = axes(g, "x")[0]
        ppu = float(frame.get("width")) / (float(ax.get("data-max")) - float(ax.get("data-min")))
        balls = next(e for e in g.iter(SVG + "g") if e.get("class") == "balls")
        rs = [float(e.get("r")) for e in balls.iter(SVG + "circle")]
        expect(f"t = {t}: a ball of radius t per point", len(rs) == len(pts)
               and all(abs(x - t * ppu) <= 0.011 for x in rs), f"{rs[:3]} vs {t * ppu}")
        xa, ya = axes(g, "x")[0], axes(g, "y")[0]
        expect("ball axes named from the header", xa.get("data-label") == "east_km (data units)"
               and ya.get("data-label") == "north_km (data units)")

    # at grid scales: the run's own count of what Rips has and Čech lacks
    with h5py.File(knn, "r") as f:
        kscale = f["grid/scale"][:]
        kdiff = f["grid/simplices_rips"][:, 2] - f["grid/simplices_cech"][:, 2]
    for i in (int(np.argmax(kdiff)), len(kscale) // 3, len(kscale) - 1):
        out = os.path.join(tmp, "grid.svg")
        must("plot", knn, "--at", repr(float(kscale[i])), "-o", out)
        _, n_tri, _, _ = ball_counts(out)
        expect(f"grid scale {i}: unfilled = simplices_rips - simplices_cech ({kdiff[i]})",
               n_tri == kdiff[i], f"{n_tri}")

    # ---- rendering with rsvg-convert ----
    rsvg = shutil.which("rsvg-convert")
    expect("rsvg-convert is installed (scripts/deps.sh: librsvg2-bin)", rsvg is not None)

    def render(svg, name):
        if rsvg is None:
            return
        from PIL import Image
        png = svg[:-4] + ".png"
        p = subprocess.run([rsvg, svg, "-o", png], capture_output=True, text=True, timeout=120)
        expect(f"{name}: rendered", p.returncode == 0, p.stderr)
        if p.returncode != 0:
            return
        r = ET.parse(svg).getroot()
        with Image.open(png) as im:
            expect(f"{name}: image of the declared size", im.size == (int(r.get("width")), int(r.get("height"))),
                   f"{im.size} vs {r.get('width')}x{r.get('height')}")
            img = np.asarray(im.convert("RGB")).astype(np.int32)
        flat = img.reshape(-1, 3)
        inked = np.mean(np.any(flat < 235, axis=1))
        colours = len(np.unique(flat[:, 0] * 65536 + flat[:, 1] * 256 + flat[:, 2]))
        expect(f"{name}: not blank ({inked:.3f} inked, std {flat.std():.1f}, {colours} colours)",
               0.02 < inked < 0.9 and flat.std() > 15 and colours >= 50)
        for hexc, what in ((BLUE, "blue"), (ORANGE, "orange")):
            c = np.array([int(hexc[i:i + 2], 16) for i in (1, 3, 5)])
            n = int(np.sum(np.all(np.abs(flat - c) <= 12, axis=1)))
            expect(f"{name}: the {what} series is drawn ({n} pixels)", n > 200)

    render(svg_path, "report")

    # ---- the HTML page ----
    html_path = os.path.join(tmp, "report.html")
    must("plot", uni, "-o", html_path)

    class Page(html.parser.HTMLParser):
        def __init__(self):
            super().__init__()
            self.ids, self.sections, self.svgs, self.outside, self.errors = set(), [], 0, [], []

        def handle_starttag(self, tag, attrs):
            a = dict(attrs)
            if "id" in a:
                self.ids.add(a["id"])
            if tag == "section":
                self.sections.append(a.get("id"))
            if tag == "svg":
                self.svgs += 1
            for k in ("src", "href", "xlink:href"):
                if k in a:
                    self.outside.append((tag, k, a[k]))
            if tag in ("script", "link", "img", "iframe", "object"):
                self.outside.append((tag, "", ""))

    text = open(html_path, encoding="utf-8").read()
    page = Page()
    page.feed(text)
    page.close()
    expect("html: a page", text.startswith("<!DOCTYPE html>") and "</html>" in text)
    expect("html: the sections", page.sections == ["summary", "barcodes", "diagrams", "curves", "hilbert",
                                                   "radii", "balls"], str(page.sections))
    expect("html: one svg per figure section", page.svgs == 6, str(page.svgs))
    expect("html: self-contained", page.outside == [] and "url(http" not in text, str(page.outside))
    inline = re.findall(r"<svg.*?</svg>", text, flags=re.S)
    ok = True
    html_ids = set()
    for s in inline:
        try:
            e = ET.fromstring(s)
            html_ids |= {x.get("id") for x in e.iter() if x.get("id")}
        except ET.ParseError as exc:
            ok = False
            print(exc)
    expect("html: every inline svg is well-formed XML", ok and len(inline) == 6)
    svg_ids = {x.get("id") for x in root.iter() if x.get("id")}
    expect("html: the same figures as the svg", svg_ids - {"summary", "barcodes", "diagrams", "curves",
                                                           "hilbert", "radii", "balls"} == html_ids,
           str(svg_ids ^ html_ids))
    same = os.path.join(tmp, "forced.html")
    must("plot", uni, "--format", "svg", "-o", same)
    expect("--format svg wins over the .html name", open(same).read().startswith("<?xml"))

    # ---- the comparison ----
    cmp_path = os.path.join(tmp, "compare.svg")
    must("plot", uni, knn, "-o", cmp_path)
    croot = ET.parse(cmp_path).getroot()
    for sec in ("summary", "barcodes", "diagrams", "curves", "radii"):
        expect(f"compare: section {sec}", by_id(croot, sec) is not None)
    expect("compare: no ball picture or heat map", by_id(croot, "balls") is None and by_id(croot, "hilbert") is None)
    for ident in ("barcode-a-cech-0", "barcode-b-cech-0", "barcode-a-rips-1", "barcode-b-rips-1",
                  "diagram-cech-1", "diagram-rips-1", "betti-1", "unfilled", "factor"):
        expect(f"compare: plot {ident}", by_id(croot, ident) is not None)
    summary = texts(by_id(croot, "summary"))
    expect("compare: both files named", uni in summary and knn in summary, summary[:300])
    with h5py.File(knn, "r") as f:
        T2 = float(f["scheme"].attrs["scale_limit"])
    for a in axes(croot, "x"):
        if (a.get("data-label") or "").startswith(("scale t", "birth")):
            expect("compare: shared scale axis [0, max T]", float(a.get("data-max")) == max(T, T2))
    for cx in ("cech", "rips"):
        want = json.loads(must("distance", uni, knn, "--complex", cx, "--p", "inf", "--json")[0])
        line = re.search(r"bottleneck distance A vs B, %s: ([^\n]*?)(?:bottleneck|$)" % ("Čech" if cx == "cech" else "Rips"),
                         summary)
        got = [float(v) for v in re.findall(r"degree \d+: ([0-9.e+-]+)", line.group(1))] if line else []
        exp = [float(f"{d['bottleneck']:.4g}") for d in want["degrees"]]
        expect(f"compare: bottleneck {cx} as nervegap distance", got == exp, f"{got} vs {exp}")
    render(cmp_path, "compare")

    # ---- the input read again ----
    work = os.path.join(tmp, "w")
    os.mkdir(work)
    shutil.copy(ring_csv, os.path.join(work, "pts.csv"))
    rel = os.path.join(work, "rel.h5")
    must("run", "pts.csv", "--radius", "knn:4", "--scale-limit", "2", "--quiet", "-o", "rel.h5", cwd=work)
    out = os.path.join(tmp, "missing.svg")
    rc, _, err = run("plot", rel, "-o", out, cwd=tmp)  # pts.csv is not in tmp
    r = ET.parse(out).getroot()
    expect("missing input: drawn without balls, said", rc == 0 and by_id(r, "balls") is None
           and "no ball picture" in texts(by_id(r, "summary")) and "pts.csv" in err, err)
    rc, _, err = run("plot", rel, "--points", os.path.join(work, "pts.csv"), "-o", out, cwd=tmp)
    expect("--points: the same file gives the balls", rc == 0 and err == "" and
           by_id(ET.parse(out).getroot(), "balls") is not None, err)
    with open(os.path.join(work, "pts.csv"), "a") as fh:
        fh.write("# edited later\n")
    rc, _, err = run("plot", "rel.h5", "-o", out, cwd=work)
    expect("changed input: no balls, said", rc == 0 and "changed" in err
           and by_id(ET.parse(out).getroot(), "balls") is None, err)
    rc, _, err = run("plot", "rel.h5", "--points", "pts.csv", "-o", out, cwd=work)
    expect("changed input given with --points: drawn, with a note", rc == 0 and "differs" in err
           and by_id(ET.parse(out).getroot(), "balls") is not None, err)

    space = os.path.join(tmp, "space.csv")
    write_csv(space, rng.normal(size=(40, 3)), "x,y,z")
    s3 = os.path.join(tmp, "space.h5")
    must("run", space, "--scale-limit", "1", "--quiet", "-o", s3)
    rc, _, err = run("plot", s3, "-o", out)
    expect("3-D input: no ball picture, said", rc == 0 and "dimension 3" in err
           and by_id(ET.parse(out).getroot(), "balls") is None, err)

    col = os.path.join(tmp, "col.csv")
    write_csv(col, np.c_[ring, rng.uniform(0.5, 1.5, len(ring))], "x,y,r")
    ch = os.path.join(tmp, "col.h5")
    must("run", col, "--radius", "column:r", "--scale-limit", "2", "--quiet", "-o", ch)
    rc, _, err = run("plot", ch, "-o", out)
    expect("radius column taken out: balls drawn", rc == 0 and err == ""
           and by_id(ET.parse(out).getroot(), "balls") is not None, err)

    cheb = os.path.join(tmp, "cheb.h5")
    must("run", ring_csv, "--metric", "chebyshev", "--radius", "knn:4", "--scale-limit", "2", "--quiet",
         "-o", cheb)
    must("plot", cheb, "--at", "1.5", "-o", out)
    r, n_tri, n_marked, _ = ball_counts(out)
    squares = list(next(e for e in by_id(r, "balls-plot").iter(SVG + "g") if e.get("class") == "balls").iter(SVG + "rect"))
    expect("L∞: square balls, nothing unfilled", n_tri == 0 and n_marked == 0 and len(squares) == len(ring))

    # many bars: the 40 longest drawn, the rest counted
    many = os.path.join(tmp, "many.csv")
    write_csv(many, rng.uniform(0, 100, (1500, 2)), "x,y")
    mh = os.path.join(tmp, "many.h5")
    must("run", many, "--max-degree", "0", "--scale-limit", "1.5", "--quiet", "-o", mh)
    must("plot", mh, "-o", out)
    with h5py.File(mh, "r") as f:
        mb = f["cech/dim0/bars"][:]
    check_barcode(ET.parse(out).getroot(), "barcode-cech-0", mb, 40, 1.5, "1500 bars")

    # a file name with markup characters stays well-formed
    odd = os.path.join(tmp, "a&b <'q'>\".h5")
    shutil.copy(uni, odd)
    rc, _, err = run("plot", odd, "-o", out)
    try:
        title = ET.parse(out).getroot().find(SVG + "title").text
    except ET.ParseError:
        title = ""
    expect("markup in a file name: well-formed, named", rc == 0 and odd in title, f"{title!r} {err}")

    # ---- errors: exit code 2, the file or flag named ----
    def refused(name, args, needle, cwd=None):
        rc, outp, err = run(*args, cwd=cwd)
        expect(f"{name}: exit code 2", rc == 2, f"{rc}: {err}")
        expect(f"{name}: names {needle}", needle in err and err.count("\n") == 1, err)
        expect(f"{name}: nothing on stdout", outp == "")

    refused("missing file", ["plot", os.path.join(tmp, "nope.h5"), "-o", out], "nope.h5")
    refused("not a results file", ["plot", ring_csv, "-o", out], "ring.csv")
    refused("bad second file", ["plot", uni, ring_csv, "-o", out], "ring.csv")
    refused("no -o", ["plot", uni], "-o")
    refused("three files", ["plot", uni, knn, uni, "-o", out], "got 3")
    refused("--at outside [0, T]", ["plot", uni, "--at", str(T * 2), "-o", out], "--at")
    refused("--at not a number", ["plot", uni, "--at", "soon", "-o", out], "--at")
    refused("--at with two files", ["plot", uni, knn, "--at", "1", "-o", out], "--at")
    refused("--points missing", ["plot", uni, "--points", os.path.join(tmp, "gone.csv"), "-o", out], "gone.csv")
    refused("--points other points", ["plot", uni, "--points", many, "-o", out], "--points")
    refused("--format", ["plot", uni, "--format", "pdf", "-o", out], "--format")
    refused("--bars 0", ["plot", uni, "--bars", "0", "-o", out], "--bars")
    refused("unwritable -o", ["plot", uni, "-o", os.path.join(tmp, "no", "such", "dir.svg")], "dir.svg")
    expect("failed runs leave no file", not os.path.exists(os.path.join(tmp, "no")))
finally:
    shutil.rmtree(tmp, ignore_errors=True)
finish()
