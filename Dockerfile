# Build stage: compile and package the shaded jar (tests run in CI, not in the image build).
# Every module the root pom lists needs its pom here, built or not; the jar takes the OpenAPI
# document and the demo fleet as resources. .ci/check-dockerfile (run by mvn verify) copies
# exactly these files into an empty folder and runs this RUN line there, so this list cannot rot.
FROM maven:3.9-eclipse-temurin-17 AS build
WORKDIR /src
COPY pom.xml .
COPY service/pom.xml service/pom.xml
COPY bench/pom.xml bench/pom.xml
COPY service/src service/src
COPY openapi openapi
COPY test-data/demo test-data/demo
RUN mvn -B -q -pl service -am package -Dmaven.test.skip=true

# Runtime stage: JRE only, non-root, database on a volume.
FROM eclipse-temurin:17-jre
RUN useradd --system --uid 10001 --home-dir /var/lib/backstate backstate \
 && mkdir -p /var/lib/backstate && chown backstate /var/lib/backstate \
 && apt-get update && apt-get install -y --no-install-recommends curl && rm -rf /var/lib/apt/lists/*
COPY --from=build /src/service/target/backstate.jar /opt/backstate/backstate.jar
COPY --from=build /src/service/target/backstate /opt/backstate/backstate
# The class-data-sharing archive that makes short commands (solve, migrate, ...) start in about
# half the time: written here by this image's JVM for the jar at its final path, since an archive
# serves only the JVM and jar path that wrote it (the build stage's would be ignored). It needs
# the JVM's own base archive, made first where the JRE lacks it. .ci/check-dockerfile replays the
# archive's RUN line with /opt/backstate in a scratch folder.
COPY --from=build /src/test-data/demo/models/reefer-40.v1.json /opt/backstate/training/model.json
COPY --from=build /src/service/src/launcher/training-trace.csv /opt/backstate/training/trace.csv
RUN test -f "$JAVA_HOME/lib/server/classes.jsa" || java -Xshare:dump -Xlog:disable
RUN BACKSTATE_WRITE_ARCHIVE=1 /opt/backstate/backstate solve --model /opt/backstate/training/model.json --trace /opt/backstate/training/trace.csv >/dev/null
USER backstate
VOLUME ["/var/lib/backstate"]
ENV BACKSTATE_DATABASE=/var/lib/backstate/backstate.db BACKSTATE_PORT=8080 BACKSTATE_JAVA_OPTS=-XX:MaxRAMPercentage=75
EXPOSE 8080
HEALTHCHECK --interval=30s --timeout=3s --start-period=20s CMD curl -fsS http://localhost:8080/readyz || exit 1
# The launcher adds the archive and runs every command, serve included, on the JVM's quick compiler
# (bench/README.md, "Which compiler the service runs"); BACKSTATE_JAVA_OPTS=-XX:TieredStopAtLevel=4
# restores the JVM's default. `docker run IMAGE solve --model ... --trace ...` works as the launcher does.
ENTRYPOINT ["/opt/backstate/backstate"]
CMD ["serve"]
