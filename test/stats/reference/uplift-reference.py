# Check values of test/stats/uplift.test.ts, computed once (never a runtime dependency):
#   python3 test/stats/reference/uplift-reference.py   (scipy 1.17.1, statsmodels 0.15.0)
import numpy as np
from scipy import stats
from statsmodels.stats.proportion import confint_proportions_2indep, proportions_ztest
# Newcombe hybrid score (method 10): uplift = contacted - holdout
for (x1,n1,x2,n2) in [(120,800,15,200),(300,3200,60,800),(9,40,1,12)]:
    lo,hi = confint_proportions_2indep(x1,n1,x2,n2,method='newcomb',compare='diff',alpha=0.05)
    print('newcombe',x1,n1,x2,n2,repr(x1/n1-x2/n2),repr(lo),repr(hi))
    z,p = proportions_ztest([x1,x2],[n1,n2])
    print('  pooled z',repr(z),repr(p))
    print('  fisher',repr(stats.fisher_exact([[x1,n1-x1],[x2,n2-x2]]).pvalue))
# Altman & Bland 2003: difference of two uplifts, unpooled Wald SE over four groups
seg=(120,800,15,200); rest=(300,3200,60,800)
def v(x,n): p=x/n; return p*(1-p)/n
d=(seg[0]/seg[1]-seg[2]/seg[3])-(rest[0]/rest[1]-rest[2]/rest[3])
se=np.sqrt(v(seg[0],seg[1])+v(seg[2],seg[3])+v(rest[0],rest[1])+v(rest[2],rest[3]))
zc=stats.norm.ppf(0.975); z=d/se
print('altman-bland',repr(d),repr(se),repr(z),repr(2*stats.norm.sf(abs(z))),repr(d-zc*se),repr(d+zc*se))
# Welch on per-contact revenue (zeros included)
rng=np.random.default_rng(20261203)
contacted=np.where(rng.random(60)<0.3, np.round(rng.gamma(2.0,20.0,60),2), 0.0)
holdout=np.where(rng.random(25)<0.15, np.round(rng.gamma(2.0,20.0,25),2), 0.0)
print('contacted=',list(contacted)); print('holdout=',list(holdout))
r=stats.ttest_ind(contacted,holdout,equal_var=False)
ci=r.confidence_interval(0.95)
print('welch',repr(contacted.mean()-holdout.mean()),repr(r.statistic),repr(r.df),repr(r.pvalue),repr(ci.low),repr(ci.high))
m,c=0.35,1.25
print('profit',repr(m*(contacted.mean()-holdout.mean())-c),repr(m*ci.low-c),repr(m*ci.high-c))
# test/report/uplift-analysis.test.ts: revenue as its `block` helper makes it, in major units
def block(n, conversions): return np.array([(1000 + (i % 5) * 10) / 100 if i < conversions else 0.0 for i in range(n)])
contacted, holdout = block(800, 120), block(200, 15)
r = stats.ttest_ind(contacted, holdout, equal_var=False); ci = r.confidence_interval(0.95)
print('block welch', repr(contacted.mean() - holdout.mean()), repr(ci.low), repr(ci.high))
print('block profit', repr(0.4 * (contacted.mean() - holdout.mean()) - 0.2), repr(0.4 * ci.low - 0.2), repr(0.4 * ci.high - 0.2))
r = stats.ttest_ind(contacted, holdout, equal_var=False); ci = r.confidence_interval(1 - 0.05 / 3)
print('block profit at 1 - 0.05/3', repr(0.4 * ci.low - 0.2), repr(0.4 * ci.high - 0.2))
# test/http/holdout-report.test.ts: Saltmere 45/150 contacted, 5/50 held out; Fennwick 30/150 and 10/50; revenue 20.00 per conversion
lo, hi = confint_proportions_2indep(45, 150, 5, 50, method='newcomb', compare='diff', alpha=0.05)
print('saltmere newcombe', repr(lo), repr(hi), 'z test', repr(proportions_ztest([45, 5], [150, 50])[1]))
d = (45/150 - 5/50) - (30/150 - 10/50); se = np.sqrt(v(45, 150) + v(5, 50) + v(30, 150) + v(10, 50))
print('saltmere vs rest', repr(d), repr(d - zc*se), repr(d + zc*se), repr(2*stats.norm.sf(abs(d/se))))
c = np.array([20.0]*45 + [0.0]*105); h = np.array([20.0]*5 + [0.0]*45)
ci = stats.ttest_ind(c, h, equal_var=False).confidence_interval(0.95)
print('saltmere value', repr(c.mean() - h.mean()), repr(ci.low), repr(ci.high), 'profit', repr(0.5*ci.low - 1), repr(0.5*ci.high - 1))
