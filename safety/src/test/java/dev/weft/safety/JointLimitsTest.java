package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import org.junit.jupiter.api.Test;

class JointLimitsTest {

    private static JointLimits.Builder good() {
        return JointLimits.builder().joint("base", -1, 1, 1, 5, 50);
    }

    @Test
    void shouldKeepEveryFieldAndTheOperatingRange() {
        JointLimits l = good().joint("elbow", -2, 3, 1.5, 6, 70, 0.25).build();
        assertThat(l.count()).isEqualTo(2);
        assertThat(l.name(1)).isEqualTo("elbow");
        assertThat(l.positionMin(1)).isEqualTo(-2);
        assertThat(l.positionMax(1)).isEqualTo(3);
        assertThat(l.velocity(1)).isEqualTo(1.5);
        assertThat(l.acceleration(1)).isEqualTo(6);
        assertThat(l.jerk(1)).isEqualTo(70);
        assertThat(l.innerMargin(1)).isEqualTo(0.25);
        assertThat(l.operatingMin(1)).isEqualTo(-1.75);
        assertThat(l.operatingMax(1)).isEqualTo(2.75);
        assertThat(l.innerMargin(0)).isZero();
    }

    @Test
    void shouldNameJointAndFieldInEveryRejection() {
        assertThatThrownBy(() -> good().joint("elbow", Double.NaN, 1, 1, 1, 1).build())
                .hasMessage("joint 1 'elbow': position min must be finite, was NaN");
        assertThatThrownBy(() -> good().joint("elbow", -1, Double.POSITIVE_INFINITY, 1, 1, 1).build())
                .hasMessage("joint 1 'elbow': position max must be finite, was Infinity");
        assertThatThrownBy(() -> good().joint("elbow", 1, 1, 1, 1, 1).build())
                .hasMessage("joint 1 'elbow': position min 1.0 must be below position max 1.0");
        assertThatThrownBy(() -> good().joint("elbow", -1, 1, 0, 1, 1).build())
                .hasMessage("joint 1 'elbow': velocity bound must be finite and > 0, was 0.0");
        assertThatThrownBy(() -> good().joint("elbow", -1, 1, 1, -3, 1).build())
                .hasMessage("joint 1 'elbow': acceleration bound must be finite and > 0, was -3.0");
        assertThatThrownBy(() -> good().joint("elbow", -1, 1, 1, 1, Double.NaN).build())
                .hasMessage("joint 1 'elbow': jerk bound must be finite and > 0, was NaN");
        assertThatThrownBy(() -> good().joint("elbow", -1, 1, 1, 1, 1, -0.1).build())
                .hasMessage("joint 1 'elbow': inner margin must be >= 0, was -0.1");
        assertThatThrownBy(() -> good().joint("elbow", -1, 1, 1, 1, 1, 1.0).build())
                .hasMessage("joint 1 'elbow': inner margin 1.0 leaves no operating range inside [-1.0, 1.0]");
        assertThatThrownBy(() -> good().joint("base", -1, 1, 1, 1, 1).build())
                .hasMessage("joint 1 'base': name is used by an earlier joint");
        assertThatThrownBy(() -> good().joint(" ", -1, 1, 1, 1, 1).build())
                .hasMessage("joint 1: name must not be empty");
        assertThatThrownBy(() -> JointLimits.builder().build())
                .hasMessage("joint limits: at least one joint is required");
    }

    @Test
    void shouldScaleOnlyTheDerivativeBounds() {
        JointLimits l = good().build().scaled(0.5, 0.25, 0.125);
        assertThat(l.positionMin(0)).isEqualTo(-1);
        assertThat(l.velocity(0)).isEqualTo(0.5);
        assertThat(l.acceleration(0)).isEqualTo(1.25);
        assertThat(l.jerk(0)).isEqualTo(6.25);
        assertThatThrownBy(() -> good().build().scaled(0, 1, 1))
                .hasMessage("velocity factor must be in (0, 1], was 0.0");
    }
}
