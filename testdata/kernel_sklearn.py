# Reference values for riskgrid's kernel ridge and k-NN tests, computed with
# scikit-learn (Debian 12 python3-sklearn 1.2.1+dfsg-1, numpy 1.24.2,
# scipy 1.10.1). Run: python3 kernel_sklearn.py > kernel_sklearn.json
import json
import numpy as np
import scipy
import sklearn
from scipy.spatial.distance import cdist
from sklearn.kernel_ridge import KernelRidge
from sklearn.neighbors import KNeighborsRegressor

rng = np.random.default_rng(20261202)
n, m, d = 30, 10, 2
x = rng.uniform(0, 2, size=(n, d))
y = np.sin(3 * x[:, 0]) + x[:, 1] ** 2 + 0.2 * rng.standard_normal(n)
z = rng.uniform(0, 2, size=(m, d))

out = {
    "generated_by": "testdata/kernel_sklearn.py",
    "versions": {"sklearn": sklearn.__version__, "numpy": np.__version__, "scipy": scipy.__version__},
    "x": x.tolist(), "y": y.tolist(), "test": z.tolist(),
    "kernel_ridge": [], "neighbours": [],
}
# riskgrid minimises (1/n)||y - f||^2 + lambda ||f||_H^2; scikit-learn's
# KernelRidge minimises ||y - f||^2 + alpha ||f||_H^2: alpha = n * lambda.
for kernel, h, lam in [("gaussian", 0.3, 1e-3), ("gaussian", 0.3, 0.1), ("gaussian", 1.0, 1e-4),
                       ("laplace", 0.5, 1e-3), ("laplace", 2.0, 0.05)]:
    if kernel == "gaussian":
        kr = KernelRidge(alpha=n * lam, kernel="rbf", gamma=1 / (2 * h * h)).fit(x, y)
        pred, fitted = kr.predict(z), kr.predict(x)
    else:  # Euclidean distance (scikit-learn's "laplacian" kernel uses the L1 distance)
        k = np.exp(-cdist(x, x) / h)
        kr = KernelRidge(alpha=n * lam, kernel="precomputed").fit(k, y)
        pred, fitted = kr.predict(np.exp(-cdist(z, x) / h)), kr.predict(k)
    a = kr.dual_coef_
    out["kernel_ridge"].append({
        "kernel": kernel, "bandwidth": h, "lambda": lam, "alpha_sklearn": n * lam,
        "pred": pred.tolist(), "train_risk": float(np.mean((y - fitted) ** 2)),
        "rkhs_norm": float(np.sqrt(a @ (fitted))),
    })
for k in [1, 3, 7, 30]:
    r = KNeighborsRegressor(n_neighbors=k, algorithm="brute").fit(x, y)
    out["neighbours"].append({"k": k, "pred": r.predict(z).tolist(),
                              "train_risk": float(np.mean((y - r.predict(x)) ** 2))})
print(json.dumps(out, indent=1))
