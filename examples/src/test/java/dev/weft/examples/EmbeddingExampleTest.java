package dev.weft.examples;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

class EmbeddingExampleTest {

    @Test
    @Timeout(60)
    void theHeadIsArmedLooksAtThePointAndStopsDisarmed() throws Exception {
        EmbeddingExample.Outcome o = EmbeddingExample.run(4.0);
        assertThat(o.state()).as("see the printed cause when it is faulted").isEqualTo("disarmed");
        assertThat(o.framesToDriver()).isEqualTo(o.ticks());
        // the soft start runs at a quarter of the limits, then the plan sweeps the head to the point
        assertThat(o.finalPose()[0]).isCloseTo(0.6, within(0.02));
        assertThat(o.finalPose()[1]).isCloseTo(0.3, within(0.02));
    }
}
