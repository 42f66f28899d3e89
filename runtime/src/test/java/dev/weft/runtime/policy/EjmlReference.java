package dev.weft.runtime.policy;

import dev.weft.onnxkit.PolicyModels.Mlp;
import org.ejml.data.DMatrixRMaj;
import org.ejml.dense.row.CommonOps_DDRM;

/**
 * The MLP forward pass computed with EJML, a general-purpose linear-algebra library from Maven
 * Central: the reference ONNX Runtime's outputs are checked against.
 */
final class EjmlReference {

    private EjmlReference() {
    }

    static double[] forward(Mlp m, double[] x) {
        DMatrixRMaj in = new DMatrixRMaj(1, m.in(), true, x);
        DMatrixRMaj w1 = matrix(m.w1(), m.in(), m.hidden());
        DMatrixRMaj b1 = matrix(m.b1(), 1, m.hidden());
        DMatrixRMaj w2 = matrix(m.w2(), m.hidden(), m.out());
        DMatrixRMaj b2 = matrix(m.b2(), 1, m.out());
        DMatrixRMaj h = new DMatrixRMaj(1, m.hidden());
        CommonOps_DDRM.mult(in, w1, h);
        CommonOps_DDRM.addEquals(h, b1);
        for (int i = 0; i < h.getNumElements(); i++) {
            h.set(i, Math.tanh(h.get(i)));
        }
        DMatrixRMaj y = new DMatrixRMaj(1, m.out());
        CommonOps_DDRM.mult(h, w2, y);
        CommonOps_DDRM.addEquals(y, b2);
        return y.getData().clone();
    }

    private static DMatrixRMaj matrix(float[] v, int rows, int cols) {
        DMatrixRMaj m = new DMatrixRMaj(rows, cols);
        for (int i = 0; i < v.length; i++) {
            m.set(i, v[i]);
        }
        return m;
    }
}
