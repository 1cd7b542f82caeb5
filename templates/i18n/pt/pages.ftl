# Mensagens das páginas do servidor (ver en/pages.ftl).

## Layout
menu-main = Principal
menu-events = Eventos
menu-import = Importar
menu-trips = Viagens
menu-station = Envio na base
menu-dashboard = Painel
menu-disputes = Divergências
signed-in-as = Conectado como
log-out = Sair
not-signed-in = Não conectado
language-switch = Idioma
language-switch-button = Mudar

## Avisos de segurança
footer-safety-title = Segurança em primeiro lugar
footer-safety-approach = Não se aproxime de desmatamento em andamento, de máquinas nem de pessoas armadas.
footer-safety-approach-more = Observe de uma distância segura, anote o que puder e saia. "Não alcançado: segurança" é um bom relatório.
footer-safety-protocol = Siga o protocolo de segurança da sua organização e a lei local (autorizações, acesso à terra, plano de viagem, horários de contato).
footer-safety-consent = Fotos de pessoas precisam do consentimento delas. Fotografe a terra, não as pessoas.
footer-safety-evidence = Provas para processos judiciais seguem as regras locais e a prática de profissionais habilitados. O Groundproof guarda as fotos sem alteração e identificadas pelo conteúdo, mas não é um sistema de cadeia de custódia.
footer-safety-sensitive = Pacotes e retornos contêm locais de atividade possivelmente ilegal: trate-os como sigilosos.

## Entrar
login-title = Entrar
login-intro = Entre para acompanhar os alertas de desmatamento.
login-name = Nome de usuário
login-password = Senha
login-button = Entrar
login-note = O trabalho de campo pode ser perigoso: não se aproxime de operações em andamento nem de pessoas armadas, e siga o protocolo de segurança da sua organização e a lei local.
login-bad-credentials = Esse nome de usuário e essa senha não conferem.
login-locked = Tentativas erradas demais: espere 15 minutos e tente de novo.
login-failed = Não foi possível entrar; veja o registro do servidor.
login-session-ended = Sua sessão terminou (o tempo acabou, ou você saiu em outro lugar). Entre de novo; o que você enviou por último não foi salvo.

## Página de erro
error-back = Volte à página de onde veio, ou para
error-start-page = a página inicial

## Importar
import-title = Importar
import-nothing = Nada foi importado
import-imported-as = { $file } importado como { $source }
import-rows-read = linhas lidas
import-alerts = alertas importados
import-duplicates = duplicados descartados
import-skipped = linhas inválidas ignoradas
import-events-created = eventos criados
import-events-grown = eventos ampliados
import-events-merged = eventos unidos
import-skipped-rows = Linhas ignoradas
import-warnings = Avisos
import-see-events = Ver os eventos
import-zones-done = Zonas importadas
import-zones-summary = Zonas: { $zones }. Eventos ligados de novo às suas zonas: { $relinked }.
import-alert-file = Arquivo de alertas
import-alert-hint = CSV (linha de cabeçalho, vírgula ou ponto e vírgula) ou pontos GeoJSON. No máximo { $limit }. Um arquivo com qualquer erro não importa nada, a não ser que você ignore as linhas inválidas.
import-no-source = Ainda não há fonte de alertas registrada. Registre uma primeiro:
import-registered = Registradas: { $sizes }.
import-source = Fonte
import-choose = escolha…
import-format = Formato
import-format-auto = detectar pelo arquivo
import-threshold = Limite de confiança
import-threshold-hint = (só para confiança numérica)
import-file = Arquivo
import-skip-invalid = Ignorar linhas inválidas (importar as válidas e listar as outras)
import-alerts-button = Importar alertas
import-zone-file = Arquivo de zonas
import-zone-hint = FeatureCollection GeoJSON de feições Polygon ou MultiPolygon com um texto "name" e, opcionalmente, um booleano "priority". Uma zona com um nome já guardado é substituída. No máximo { $limit }.
import-zones-button = Importar zonas

## Parear um celular
pair-page-title = Parear um celular
pair-page-bundle = Pacote { $id } para { $team }, prazo { $due }.
pair-another = Outro código
pair-back = Voltar às viagens
pair-back-trip = Voltar à viagem
pairing-title = Colocar esta viagem em um celular
pairing-qr-label = Código QR que abre o aplicativo de campo com esta viagem
pairing-scan = No celular da equipe, leia o código com a câmera, ou abra o aplicativo de campo e digite este código:
pairing-open-app = Abrir o aplicativo de campo
pairing-once = O código funciona uma vez, para um celular, até { $expires }. Faça outro para cada celular. O celular passa a ter locais de atividade possivelmente ilegal: trate-o como sigiloso.
