package dev.interim.embedded;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.net.InetAddress;
import java.net.ServerSocket;

/**
 * Free TCP ports on 127.0.0.1, found by binding port 0 and releasing it. Another process may take
 * such a port before the broker binds it; {@link EmbeddedKafka#start} then tries again.
 */
final class FreePorts {
    /** "Choose a free port": the value a caller passes for no fixed port. */
    static final int ANY = 0;

    private FreePorts() {
    }

    /** {@code count} distinct free ports (all held open together while choosing, so they differ). */
    static int[] pick(int count) {
        ServerSocket[] sockets = new ServerSocket[count];
        try {
            InetAddress loopback = InetAddress.getByName(BrokerSettings.HOST);
            int[] ports = new int[count];
            for (int i = 0; i < count; i++) {
                sockets[i] = new ServerSocket(0, 1, loopback);
                ports[i] = sockets[i].getLocalPort();
            }
            return ports;
        } catch (IOException e) {
            throw new UncheckedIOException("cannot find a free port on " + BrokerSettings.HOST, e);
        } finally {
            for (ServerSocket socket : sockets) {
                closeQuietly(socket);
            }
        }
    }

    private static void closeQuietly(ServerSocket socket) {
        if (socket != null) {
            try {
                socket.close();
            } catch (IOException ignored) {
                // Nothing to do: the port is released either way when the socket is collected.
            }
        }
    }
}
